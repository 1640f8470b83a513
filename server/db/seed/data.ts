// The demo scenario: an invented club, invented people and three kit designs of Kitwright's own.
// Nothing here describes a real club, person, product or published design.

export const DEMO_PASSWORD = 'buildday-demo'

export const CLUB = {
  name: 'Harrowmere & District Radio Club',
  buildDay: {
    name: 'Harrowmere Winter Build Day',
    date: '2027-02-13',
    venue: 'Harrowmere Scout Hall, Mill Lane',
    seats: 40,
    currency: 'GBP',
  },
}

type R = 'organiser' | 'packer' | 'builder'
export const PEOPLE: { name: string, email: string, roles: R[], member?: boolean, callsign?: string }[] = [
  { name: 'Olwen Hartley', email: 'olwen.hartley@club.invalid', roles: ['organiser', 'packer', 'builder'], callsign: 'XX1OHA' },
  { name: 'Desmond Okonkwo-Reyes', email: 'des.okonkwo@club.invalid', roles: ['organiser', 'builder'], callsign: 'XX1DOR' },
  { name: 'Pip Achterberg', email: 'pip.achterberg@club.invalid', roles: ['packer'] },
  { name: 'Magnus Teale', email: 'magnus.teale@club.invalid', roles: ['packer', 'builder'] },
  { name: 'Ruth Ellingworth', email: 'ruth.ellingworth@club.invalid', roles: ['packer'] },
  ...[
    'Bea Marchetti', 'Tomasz Wrenfield', 'Ingrid Calloway', 'Hamish Pryce', 'Nadia Sorrell', 'Kwame Ashdown',
    'Lottie Fairbairn', 'Rufus Kilbride', 'Saoirse Dunmore', 'Ezra Quennell', 'Priya Hollins', 'Cormac Vesey',
    'Hester Blackwood', 'Idris Penhallow', 'Juno Stavely', 'Ferdinand Oakes', 'Marisol Trent', 'Anselm Greaves',
    'Dilys Harrower', 'Otto Lindqvist-Barr',
  ].map((name, i) => ({
    name,
    email: `${name.toLowerCase().split(' ')[0]}.${name.toLowerCase().split(' ').slice(-1)[0]}@club.invalid`,
    roles: ['builder'] as R[],
    member: i % 5 !== 4,
  })),
]

export type PartSeed = {
  key: string, kind: 'resistor' | 'capacitor' | 'inductor' | 'crystal' | 'diode' | 'transistor' | 'ic' | 'connector' | 'hardware' | 'board' | 'other'
  name: string, value?: number, unit?: string, valueText?: string, tolerancePct?: number, powerW?: number, voltageV?: number, currentA?: number
  dielectric?: string, mounting?: 'tht' | 'smd', polarised?: boolean, package?: string, pinoutNote?: string, description?: string
  costMinor: number, qty: number, bin: string
}

const res = (key: string, text: string, value: number, costMinor: number, qty: number, bin: string, extra: Partial<PartSeed> = {}): PartSeed =>
  ({ key, kind: 'resistor', name: `Resistor ${text}`, value, unit: 'Ω', valueText: text, tolerancePct: 5, powerW: 0.25, mounting: 'tht', package: 'axial 0.25 W', costMinor, qty, bin, ...extra })
const cap = (key: string, text: string, value: number, dielectric: string, voltageV: number, costMinor: number, qty: number, bin: string, extra: Partial<PartSeed> = {}): PartSeed =>
  ({ key, kind: 'capacitor', name: `Capacitor ${text} ${dielectric}`, value, unit: 'F', valueText: text, dielectric, voltageV, tolerancePct: dielectric === 'C0G' ? 5 : 10, mounting: 'tht', polarised: dielectric === 'electrolytic', package: dielectric === 'electrolytic' ? 'radial 5 mm' : 'disc 2.5 mm', costMinor, qty, bin, ...extra })

export const PARTS: PartSeed[] = [
  res('r10', '10 Ω', 10, 2, 300, 'A-01'),
  res('r47', '47 Ω', 47, 2, 300, 'A-02'),
  res('r100', '100 Ω', 100, 2, 400, 'A-03'),
  res('r470', '470 Ω', 470, 2, 300, 'A-04'),
  res('r1k', '1 kΩ', 1000, 2, 500, 'A-05'),
  res('r1k-1pc', '1 kΩ 1 %', 1000, 4, 200, 'A-06', { tolerancePct: 1, name: 'Resistor 1 kΩ 1 %', package: 'axial 0.25 W metal film' }),
  res('r2k2', '2.2 kΩ', 2200, 2, 300, 'A-07'),
  res('r4k7', '4.7 kΩ', 4700, 2, 400, 'A-08'),
  res('r10k', '10 kΩ', 10000, 2, 500, 'A-09'),
  res('r47k', '47 kΩ', 47000, 2, 300, 'A-10'),
  res('r100k', '100 kΩ', 100000, 2, 300, 'A-11'),
  res('r1m', '1 MΩ', 1e6, 2, 200, 'A-12'),
  res('r51-1w', '51 Ω 1 W', 51, 9, 80, 'A-13', { powerW: 1, name: 'Resistor 51 Ω 1 W', package: 'axial 1 W' }),
  cap('c22p', '22 pF', 22e-12, 'C0G', 50, 3, 300, 'B-01'),
  cap('c47p', '47 pF', 47e-12, 'C0G', 50, 3, 200, 'B-02'),
  cap('c100p', '100 pF', 100e-12, 'C0G', 50, 3, 300, 'B-03'),
  cap('c270p', '270 pF', 270e-12, 'C0G', 50, 4, 200, 'B-04'),
  cap('c470p', '470 pF', 470e-12, 'C0G', 100, 4, 200, 'B-05'),
  cap('c820p', '820 pF', 820e-12, 'C0G', 100, 5, 150, 'B-06'),
  cap('c1n', '1 nF', 1e-9, 'C0G', 50, 5, 200, 'B-07'),
  cap('c10n', '10 nF', 10e-9, 'X7R', 50, 3, 400, 'B-08'),
  cap('c100n', '100 nF', 100e-9, 'X7R', 50, 3, 600, 'B-09'),
  cap('c100n-c0g', '100 nF C0G', 100e-9, 'C0G', 50, 12, 80, 'B-10'),
  cap('c10u', '10 µF', 10e-6, 'electrolytic', 25, 6, 250, 'B-11', { tolerancePct: 20 }),
  cap('c100u', '100 µF', 100e-6, 'electrolytic', 25, 8, 200, 'B-12', { tolerancePct: 20 }),
  cap('c220u', '220 µF', 220e-6, 'electrolytic', 25, 10, 120, 'B-13', { tolerancePct: 20 }),
  cap('vc60p', '6–60 pF trimmer', 60e-12, 'film', 100, 45, 60, 'B-14', { name: 'Trimmer capacitor 6–60 pF', package: 'trimmer 7 mm' }),
  cap('vc365p', '365 pF variable', 365e-12, 'air', 200, 520, 20, 'B-15', { name: 'Variable capacitor 365 pF', package: 'panel, 6 mm shaft', tolerancePct: 20 }),
  { key: 'l10u', kind: 'inductor', name: 'Inductor 10 µH', value: 10e-6, unit: 'H', valueText: '10 µH', currentA: 0.3, mounting: 'tht', package: 'axial', costMinor: 14, qty: 200, bin: 'C-01' },
  { key: 'l100u', kind: 'inductor', name: 'Inductor 100 µH', value: 100e-6, unit: 'H', valueText: '100 µH', currentA: 0.2, mounting: 'tht', package: 'axial', costMinor: 15, qty: 150, bin: 'C-02' },
  { key: 't37-2', kind: 'inductor', name: 'Toroid core T37 mix 2 (red)', description: 'Iron-powder core, 9.5 mm OD, wind per the builder notes', costMinor: 38, qty: 120, bin: 'C-03', package: 'toroid 9.5 mm' },
  { key: 't50-2', kind: 'inductor', name: 'Toroid core T50 mix 2 (red)', description: 'Iron-powder core, 12.7 mm OD', costMinor: 55, qty: 80, bin: 'C-04', package: 'toroid 12.7 mm' },
  { key: 'ft37', kind: 'inductor', name: 'Ferrite toroid FT37 mix 43', description: 'Ferrite core for the transformer', costMinor: 42, qty: 100, bin: 'C-05', package: 'toroid 9.5 mm' },
  { key: 'wire26', kind: 'hardware', name: 'Enamelled copper wire 0.4 mm, 1 m cut', costMinor: 20, qty: 200, bin: 'C-06' },
  { key: 'x7030', kind: 'crystal', name: 'Crystal 7.030 MHz', value: 7.03e6, unit: 'Hz', valueText: '7.030 MHz', package: 'HC-49/S', costMinor: 65, qty: 80, bin: 'D-01' },
  { key: 'x3560', kind: 'crystal', name: 'Crystal 3.560 MHz', value: 3.56e6, unit: 'Hz', valueText: '3.560 MHz', package: 'HC-49/S', costMinor: 70, qty: 40, bin: 'D-02' },
  { key: 'x14060', kind: 'crystal', name: 'Crystal 14.060 MHz', value: 14.06e6, unit: 'Hz', valueText: '14.060 MHz', package: 'HC-49/S', costMinor: 70, qty: 60, bin: 'D-03' },
  { key: 'd-sig', kind: 'diode', name: 'Small-signal silicon diode', package: 'DO-35', costMinor: 2, qty: 300, bin: 'D-04', polarised: true },
  { key: 'd-schottky', kind: 'diode', name: 'Schottky diode 40 V 1 A', package: 'DO-41', costMinor: 6, qty: 150, bin: 'D-05', polarised: true },
  { key: 'd-germ', kind: 'diode', name: 'Germanium point-contact diode', package: 'DO-7', costMinor: 35, qty: 60, bin: 'D-06', polarised: true, description: 'For the SWR bridge detector' },
  { key: 'led-red', kind: 'diode', name: 'LED red 3 mm', package: 'T-1', costMinor: 4, qty: 200, bin: 'D-07', polarised: true, pinoutNote: 'Long lead is the anode' },
  { key: 'q-npn', kind: 'transistor', name: 'NPN small-signal transistor, EBC', package: 'TO-92', costMinor: 5, qty: 300, bin: 'E-01', pinoutNote: 'EBC, flat face towards you' },
  { key: 'q-npn-cbe', kind: 'transistor', name: 'NPN small-signal transistor, CBE', package: 'TO-92', costMinor: 5, qty: 200, bin: 'E-02', pinoutNote: 'CBE, flat face towards you' },
  { key: 'q-pa', kind: 'transistor', name: 'NPN RF power transistor 1 W', package: 'TO-39', costMinor: 120, qty: 50, bin: 'E-03', pinoutNote: 'Tab marks the emitter' },
  { key: 'q-fet', kind: 'transistor', name: 'N-channel JFET', package: 'TO-92', costMinor: 18, qty: 120, bin: 'E-04', pinoutNote: 'DSG, flat face towards you' },
  { key: 'u-mixer', kind: 'ic', name: 'Double-balanced mixer/oscillator IC', package: 'DIP-8', costMinor: 180, qty: 40, bin: 'E-05', pinoutNote: 'Notch towards the crystal' },
  { key: 'u-audio', kind: 'ic', name: 'Low-voltage audio power amplifier IC', package: 'DIP-8', costMinor: 60, qty: 60, bin: 'E-06' },
  { key: 'u-reg', kind: 'ic', name: 'Voltage regulator 5 V 100 mA', package: 'TO-92', costMinor: 20, qty: 100, bin: 'E-07', pinoutNote: 'Output, ground, input — check the sheet' },
  { key: 'skt8', kind: 'connector', name: 'IC socket DIP-8', package: 'DIP-8', costMinor: 8, qty: 150, bin: 'F-01' },
  { key: 'j-dc', kind: 'connector', name: 'DC power jack 2.1 mm', costMinor: 30, qty: 90, bin: 'F-02' },
  { key: 'j-35', kind: 'connector', name: 'Stereo jack socket 3.5 mm', costMinor: 25, qty: 150, bin: 'F-03' },
  { key: 'j-bnc', kind: 'connector', name: 'BNC socket, PCB mount', costMinor: 90, qty: 60, bin: 'F-04' },
  { key: 'j-uhf', kind: 'connector', name: 'UHF panel socket', costMinor: 110, qty: 40, bin: 'F-05' },
  { key: 'sw-rot', kind: 'hardware', name: 'Rotary switch 1 pole 12 way', costMinor: 150, qty: 25, bin: 'F-06' },
  { key: 'vr10k', kind: 'resistor', name: 'Potentiometer 10 kΩ log with switch', value: 10000, unit: 'Ω', valueText: '10 kΩ log', powerW: 0.125, tolerancePct: 20, mounting: 'tht', package: 'panel 16 mm', costMinor: 85, qty: 60, bin: 'F-07' },
  { key: 'knob', kind: 'hardware', name: 'Knob 20 mm, 6 mm shaft', costMinor: 40, qty: 120, bin: 'G-01' },
  { key: 'm3', kind: 'hardware', name: 'M3 × 6 mm screw and nut', costMinor: 3, qty: 800, bin: 'G-02' },
  { key: 'standoff', kind: 'hardware', name: 'M3 × 10 mm nylon standoff', costMinor: 6, qty: 400, bin: 'G-03' },
  { key: 'pcb-wren', kind: 'board', name: 'Wren 40 circuit board rev B', costMinor: 350, qty: 45, bin: 'H-01' },
  { key: 'pcb-linnet', kind: 'board', name: 'Linnet 20 circuit board rev A', costMinor: 380, qty: 30, bin: 'H-02' },
  { key: 'pcb-tern', kind: 'board', name: 'Tern tuner circuit board rev A', costMinor: 300, qty: 20, bin: 'H-03' },
]

export const BIN_PLACES: Record<string, string> = {
  A: 'Shelf A, resistor drawers (left cabinet)',
  B: 'Shelf B, capacitor drawers (left cabinet)',
  C: 'Shelf C, inductors and wire',
  D: 'Shelf D, crystals and diodes',
  E: 'Shelf E, semiconductors (anti-static)',
  F: 'Shelf F, connectors and controls',
  G: 'Shelf G, hardware tubs',
  H: 'Shelf H, boards (flat box)',
}

/** Swap groups: interchangeable parts, with the warning shown wherever the stand-in is used. */
export const SWAP_GROUPS: { name: string, warning?: string, members: { key: string, direction: 'both' | 'replaces' | 'replaced' }[] }[] = [
  { name: 'NPN small-signal, other pinout', warning: 'Pinout differs (CBE instead of EBC): turn it 180° so the emitter lands on E', members: [{ key: 'q-npn', direction: 'both' }, { key: 'q-npn-cbe', direction: 'both' }] },
  { name: 'Larger toroid for the filter', warning: 'Larger core: wind the same turns and spread them evenly', members: [{ key: 't37-2', direction: 'replaced' }, { key: 't50-2', direction: 'replaces' }] },
]

type L = { d: string, qty?: number, part: string, stage: string, notes?: string, noStandIns?: boolean }

export const KITS: { slug: string, name: string, description: string, designerCredit: string, transmits: boolean, stages: string[], revisions: { label: string, state: 'released' | 'draft', lines: L[], options?: { group: string, rule: 'one' | 'zero-or-one', options: { name: string, lines: L[] }[] }[] }[] }[] = [
  {
    slug: 'wren-40',
    name: 'Wren 40 receiver',
    description: 'A direct-conversion CW receiver for 40 m or 80 m: crystal-controlled oscillator, balanced mixer, audio filter and headphone amplifier. An evening build for a first kit.',
    designerCredit: 'Designed for the club by Olwen Hartley',
    transmits: false,
    stages: ['Power and regulator', 'Oscillator and mixer', 'Audio and controls', 'Final assembly'],
    revisions: [
      {
        label: 'A',
        state: 'released',
        lines: [
          { d: 'PCB1', part: 'pcb-wren', stage: 'Power and regulator' },
          { d: 'J1', part: 'j-dc', stage: 'Power and regulator' },
          { d: 'D1', part: 'd-schottky', stage: 'Power and regulator', notes: 'Reverse-polarity guard: band towards U1' },
          { d: 'U1', part: 'u-reg', stage: 'Power and regulator' },
          { d: 'C1, C2', part: 'c100n', stage: 'Power and regulator' },
          { d: 'C3', part: 'c100u', stage: 'Power and regulator', notes: 'Mind the polarity' },
          { d: 'R1', part: 'r1k', stage: 'Power and regulator' },
          { d: 'LED1', part: 'led-red', stage: 'Power and regulator' },
          { d: 'U2', part: 'u-mixer', stage: 'Oscillator and mixer' },
          { d: 'IC1', part: 'skt8', stage: 'Oscillator and mixer', notes: 'Socket for U2' },
          { d: 'C4-C6', part: 'c100n', stage: 'Oscillator and mixer' },
          { d: 'C7, C8', part: 'c270p', stage: 'Oscillator and mixer', noStandIns: true, notes: 'Oscillator: C0G only' },
          { d: 'C9', part: 'c47p', stage: 'Oscillator and mixer' },
          { d: 'VC1', part: 'vc60p', stage: 'Oscillator and mixer' },
          { d: 'L1', part: 't37-2', stage: 'Oscillator and mixer', notes: '22 turns of 0.4 mm wire' },
          { d: 'W1', part: 'wire26', stage: 'Oscillator and mixer' },
          { d: 'R2, R3', part: 'r4k7', stage: 'Oscillator and mixer' },
          { d: 'U3', part: 'u-audio', stage: 'Audio and controls' },
          { d: 'IC2', part: 'skt8', stage: 'Audio and controls', notes: 'Socket for U3' },
          { d: 'Q1', part: 'q-npn', stage: 'Audio and controls' },
          { d: 'R4-R6', part: 'r10k', stage: 'Audio and controls' },
          { d: 'R7', part: 'r47k', stage: 'Audio and controls' },
          { d: 'R8', part: 'r10', stage: 'Audio and controls' },
          { d: 'C10, C11', part: 'c10n', stage: 'Audio and controls' },
          { d: 'C12, C13', part: 'c10u', stage: 'Audio and controls' },
          { d: 'C14', part: 'c220u', stage: 'Audio and controls' },
          { d: 'RV1', part: 'vr10k', stage: 'Audio and controls' },
          { d: 'J2', part: 'j-35', stage: 'Audio and controls' },
          { d: 'J3', part: 'j-bnc', stage: 'Final assembly' },
          { d: 'HW1', qty: 2, part: 'knob', stage: 'Final assembly' },
          { d: 'HW2', qty: 4, part: 'm3', stage: 'Final assembly' },
          { d: 'HW3', qty: 4, part: 'standoff', stage: 'Final assembly' },
        ],
        options: [
          {
            group: 'Band set',
            rule: 'one',
            options: [
              { name: '40 m (7.030 MHz)', lines: [{ d: 'X1', part: 'x7030', stage: 'Oscillator and mixer' }, { d: 'C15, C16', part: 'c470p', stage: 'Oscillator and mixer' }] },
              { name: '80 m (3.560 MHz)', lines: [{ d: 'X1', part: 'x3560', stage: 'Oscillator and mixer' }, { d: 'C15, C16', part: 'c820p', stage: 'Oscillator and mixer' }] },
            ],
          },
        ],
      },
    ],
  },
  {
    slug: 'linnet-20',
    name: 'Linnet 20 transmitter',
    description: 'A crystal-controlled 20 m CW transmitter of about 2 W (QRP) with a keyed driver, a class-C output stage and a seven-element low-pass filter.',
    designerCredit: 'Designed for the club by Desmond Okonkwo-Reyes',
    transmits: true,
    stages: ['Oscillator', 'Driver and output', 'Low-pass filter'],
    revisions: [
      {
        label: 'A',
        state: 'released',
        lines: [
          { d: 'PCB1', part: 'pcb-linnet', stage: 'Oscillator' },
          { d: 'X1', part: 'x14060', stage: 'Oscillator' },
          { d: 'Q1', part: 'q-npn', stage: 'Oscillator' },
          { d: 'R1', part: 'r100k', stage: 'Oscillator' },
          { d: 'R2', part: 'r1k', stage: 'Oscillator' },
          { d: 'C1, C2', part: 'c100p', stage: 'Oscillator', noStandIns: true },
          { d: 'C3', part: 'c100n', stage: 'Oscillator' },
          { d: 'Q2', part: 'q-npn', stage: 'Driver and output' },
          { d: 'Q3', part: 'q-pa', stage: 'Driver and output' },
          { d: 'T1', part: 'ft37', stage: 'Driver and output', notes: '10 bifilar turns' },
          { d: 'R3', part: 'r470', stage: 'Driver and output' },
          { d: 'R4', part: 'r47', stage: 'Driver and output' },
          { d: 'R5', part: 'r10', stage: 'Driver and output' },
          { d: 'C4-C6', part: 'c100n', stage: 'Driver and output' },
          { d: 'C7', part: 'c100u', stage: 'Driver and output' },
          { d: 'J1', part: 'j-dc', stage: 'Driver and output' },
          { d: 'J2', part: 'j-35', stage: 'Driver and output', notes: 'Key jack' },
          { d: 'L1, L2', part: 't37-2', stage: 'Low-pass filter', notes: '12 turns each' },
          { d: 'W1', qty: 2, part: 'wire26', stage: 'Low-pass filter' },
          { d: 'C8, C11', part: 'c270p', stage: 'Low-pass filter', noStandIns: true },
          { d: 'C9, C10', part: 'c470p', stage: 'Low-pass filter', noStandIns: true },
          { d: 'J3', part: 'j-bnc', stage: 'Low-pass filter' },
          { d: 'HW1', qty: 4, part: 'm3', stage: 'Low-pass filter' },
        ],
        options: [
          { group: 'Add-ons', rule: 'zero-or-one', options: [{ name: 'Dummy load and indicator', lines: [{ d: 'R20', qty: 1, part: 'r51-1w', stage: 'Low-pass filter' }, { d: 'D20', part: 'd-germ', stage: 'Low-pass filter' }, { d: 'LED20', part: 'led-red', stage: 'Low-pass filter' }] }] },
        ],
      },
    ],
  },
  {
    slug: 'tern-atu',
    name: 'Tern antenna tuner',
    description: 'A compact L-network antenna tuner for 80–10 m with a tapped toroid inductor, a variable capacitor and a built-in SWR bridge with LED indicator.',
    designerCredit: 'Designed for the club by Olwen Hartley and Magnus Teale',
    transmits: false,
    stages: ['SWR bridge', 'Network', 'Case and connectors'],
    revisions: [
      {
        label: 'A',
        state: 'released',
        lines: [
          { d: 'PCB1', part: 'pcb-tern', stage: 'SWR bridge' },
          { d: 'T1', part: 'ft37', stage: 'SWR bridge', notes: '1:10 current transformer' },
          { d: 'D1, D2', part: 'd-germ', stage: 'SWR bridge' },
          { d: 'R1, R2', part: 'r51-1w', stage: 'SWR bridge' },
          { d: 'R3', part: 'r2k2', stage: 'SWR bridge' },
          { d: 'C1, C2', part: 'c10n', stage: 'SWR bridge' },
          { d: 'LED1', part: 'led-red', stage: 'SWR bridge' },
          { d: 'L1', part: 't50-2', stage: 'Network', notes: '28 turns tapped every 3' },
          { d: 'W1', qty: 3, part: 'wire26', stage: 'Network' },
          { d: 'S1', part: 'sw-rot', stage: 'Network' },
          { d: 'VC1', part: 'vc365p', stage: 'Network' },
          { d: 'J1, J2', part: 'j-uhf', stage: 'Case and connectors' },
          { d: 'HW1', qty: 2, part: 'knob', stage: 'Case and connectors' },
          { d: 'HW2', qty: 6, part: 'm3', stage: 'Case and connectors' },
        ],
      },
    ],
  },
]

export const SUPPLIERS = ['Northgate Components', 'Brackley Electronic Supplies']
