import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { unit as mathUnit } from 'mathjs'
import {
  decodeCapCode,
  decodeColourBands,
  decodeSmdCode,
  describeValue,
  EIA96_MULTIPLIERS,
  encodeCapCode,
  encodeColourBands,
  eSeries,
  findCombination,
  formatValue,
  inSeries,
  nearestInSeries,
  parseValue,
  sameValue,
  SERIES_NAMES,
  smallestSeries,
  toLetterCode,
  TOLERANCE_LETTERS,
  valueQueries,
  valueQuery,
} from '../../shared/utils/values'

const close = (a: number, b: number, rel = 1e-9) => Math.abs(a - b) <= rel * Math.max(Math.abs(a), Math.abs(b))

describe('parseValue: SI prefixes and units', () => {
  // Check values: SI prefixes (p n µ m k M G) as defined by the SI brochure; common BOM spellings (common practice).
  it.each([
    ['4.7k', 'resistor', 4700, 'Ω'],
    ['4.7 kΩ', undefined, 4700, 'Ω'],
    ['4.7 k\u2126', undefined, 4700, 'Ω'], // OHM SIGN, not Greek omega
    ['4.7K', 'resistor', 4700, 'Ω'],
    ['4700', 'resistor', 4700, 'Ω'],
    ['100nF', undefined, 100e-9, 'F'],
    ['100 nF', 'capacitor', 100e-9, 'F'],
    ['0.1uF', 'capacitor', 0.1e-6, 'F'],
    ['0.1u', 'capacitor', 0.1e-6, 'F'],
    ['10\u00B5H', undefined, 10e-6, 'H'], // MICRO SIGN
    ['10\u03BCH', undefined, 10e-6, 'H'], // GREEK SMALL LETTER MU
    ['7.030 MHz', 'crystal', 7.03e6, 'Hz'],
    ['14.060MHz', undefined, 14.06e6, 'Hz'],
    ['32.768 kHz', 'crystal', 32768, 'Hz'],
    ['1/4W', undefined, 0.25, 'W'],
    ['1.5 kV', undefined, 1500, 'V'],
    ['330 mA', undefined, 0.33, 'A'],
    ['2.2 Mohm', undefined, 2.2e6, 'Ω'],
    ['1e3', 'resistor', 1000, 'Ω'],
    ['.47u', 'capacitor', 0.47e-6, 'F'],
  ])('%s (%s) → %d %s', (text, kind, value, unit) => {
    const p = parseValue(text, kind)
    expect(close(p.value, value)).toBe(true)
    expect(p.unit).toBe(unit)
  })

  it('the kind gives the unit when none is written', () => {
    expect(parseValue('10', 'resistor').unit).toBe('Ω')
    expect(parseValue('10n', 'capacitor').unit).toBe('F')
    expect(parseValue('10u', 'inductor').unit).toBe('H')
    expect(parseValue('7.03M', 'crystal').unit).toBe('Hz')
    expect(parseValue('10').unit).toBe('')
  })

  it('a letter straight after the number is a prefix; an upper-case F after a resistance is 1 %', () => {
    expect(parseValue('47K')).toEqual({ value: 47000, unit: '' })
    expect(parseValue('47KJ', 'resistor')).toEqual({ value: 47000, unit: 'Ω', tolerance: 5 })
    expect(parseValue('10F', 'resistor')).toEqual({ value: 10, unit: 'Ω', tolerance: 1 })
    expect(parseValue('10F', 'capacitor')).toEqual({ value: 10, unit: 'F' })
    expect(parseValue('4.7 kF', 'resistor')).toEqual({ value: 4700, unit: 'Ω', tolerance: 1 })
  })
})

describe('parseValue agrees with mathjs (reference library for SI units)', () => {
  // mathjs rejects RKM codes and µ, so only plain SI spellings are compared, approximately.
  it.each([
    ['4.7 kohm', 'ohm'], ['2.2 Mohm', 'ohm'], ['100 nF', 'F'], ['0.1 uF', 'F'], ['47 pF', 'F'],
    ['7.030 MHz', 'Hz'], ['32.768 kHz', 'Hz'], ['10 uH', 'H'], ['250 mW', 'W'], ['1.5 kV', 'V'], ['330 mA', 'A'],
  ])('%s', (text, base) => {
    expect(close(parseValue(text).value, mathUnit(text).toNumber(base), 1e-12)).toBe(true)
  })
})

describe('parseValue: IEC 60062:2016 letter-and-digit (RKM) code', () => {
  it.each([
    ['R47', 0.47], ['4R7', 4.7], ['47R', 47], ['470R', 470], ['0R', 0], ['4k7', 4700], ['4K7', 4700], ['47K', 47000],
    ['47K3', 47300], ['2M2', 2.2e6], ['4M7', 4.7e6], ['1G0', 1e9], ['1k0', 1000],
  ])('resistance %s = %d Ω', (code, ohms) => {
    const p = parseValue(code, 'resistor')
    expect(close(p.value, ohms)).toBe(true)
    expect(p.unit).toBe('Ω')
  })

  it.each([
    ['p47', 0.47e-12], ['4p7', 4.7e-12], ['100p', 100e-12], ['4n7', 4.7e-9], ['47n', 47e-9], ['\u00B547', 0.47e-6],
    ['4\u00B57', 4.7e-6], ['1u0', 1e-6], ['4m7', 4.7e-3],
  ])('capacitance %s = %d F', (code, farads) => {
    const p = parseValue(code, 'capacitor')
    expect(close(p.value, farads)).toBe(true)
    expect(p.unit).toBe('F')
  })

  it('R as the decimal point means ohms even without a kind', () => {
    expect(parseValue('4R7')).toEqual({ value: 4.7, unit: 'Ω' })
  })

  it.each([
    ['4K7B', 0.1], ['4K7C', 0.25], ['4K7D', 0.5], ['4K7F', 1], ['4K7G', 2], ['4K7J', 5], ['4K7K', 10], ['4K7M', 20], ['4K7Z', 80],
  ])('IEC 60062 tolerance letter: %s → ±%d %%', (code, tol) => {
    expect(parseValue(code, 'resistor')).toEqual({ value: 4700, unit: 'Ω', tolerance: tol })
  })

  it('IEC 60062 tolerance letters: Z is +80/−20 %, the others symmetric', () => {
    expect(TOLERANCE_LETTERS.Z).toEqual({ plus: 80, minus: 20 })
    expect(TOLERANCE_LETTERS.J).toEqual({ plus: 5, minus: 5 })
    expect(parseValue('100nK', 'capacitor')).toEqual({ value: 100e-9, unit: 'F', tolerance: 10 })
    expect(parseValue('4n7F', 'capacitor')).toEqual({ value: 4.7e-9, unit: 'F' })
  })
})

describe('parseValue refuses what it cannot read', () => {
  it.each([
    ['4k7k', /not a value/],
    ['k', /not a value/],
    ['4 7 k', /not a value/],
    ['', /empty/],
    ['   ', /empty/],
    ['1e400', /too large/],
    ['1e-400', /too small/],
    ['-4k7', /negative/],
    ['\u22124.7k', /negative/],
    ['4,7k', /point for decimals/],
    ['4.7.1k', /not a value/],
    ['abc', /not a value/],
    ['1/0', /division by zero/],
    ['7 mhz', /MHz/],
  ])('%j', (text, message) => {
    expect(() => parseValue(text)).toThrow(message)
  })

  it('a unit that does not fit the kind', () => {
    expect(() => parseValue('100nF', 'resistor')).toThrow(/capacitance \(F\) but a resistor needs Ω/)
    expect(() => parseValue('4R7', 'capacitor')).toThrow(/resistance/)
    expect(() => parseValue('1/4W', 'resistor')).toThrow(/power/)
  })
})

describe('formatValue', () => {
  it.each([
    [4700, 'Ω', '4.7 kΩ'], [100e-9, 'F', '100 nF'], [7.03e6, 'Hz', '7.03 MHz'], [14.06e6, 'Hz', '14.06 MHz'],
    [47, 'Ω', '47 Ω'], [1e-6, 'F', '1 µF'], [2.2e-12, 'F', '2.2 pF'], [0.25, 'W', '250 mW'], [0, 'Ω', '0 Ω'],
    [1e6, 'Ω', '1 MΩ'], [999.9999999999999, 'Ω', '1 kΩ'], [1e-13, 'F', '0.1 pF'], [4700, '', '4.7 k'],
    [32768, 'Hz', '32.768 kHz'],
  ])('%d %s → %s', (v, u, text) => {
    expect(formatValue(v, u)).toBe(text)
  })

  it('refuses a value that is not a number', () => {
    expect(() => formatValue(Number.NaN, 'Ω')).toThrow(/Cannot format/)
  })

  // Property: what formatValue writes, parseValue reads back (relative 1e-9).
  it.each([
    ['resistor', 'Ω', -3, 9],
    ['capacitor', 'F', -12, 0],
    ['inductor', 'H', -9, 0],
    ['crystal', 'Hz', 3, 9],
  ])('round trip for %s values', (kind, unit, lo, hi) => {
    fc.assert(fc.property(fc.double({ min: lo, max: hi, noNaN: true }), (e) => {
      const v = 10 ** e
      const back = parseValue(formatValue(v, unit), kind)
      return back.unit === unit && close(back.value, v)
    }), { numRuns: 2000 })
  })
})

describe('toLetterCode (IEC 60062 RKM; Kitwright writes lower-case k and a trailing 0 on one-digit whole values)', () => {
  it.each([
    [4700, 'Ω', '4k7'], [0.47, 'Ω', 'R47'], [4.7, 'Ω', '4R7'], [470, 'Ω', '470R'], [1000, 'Ω', '1k0'], [10000, 'Ω', '10k'],
    [2.2e6, 'Ω', '2M2'], [0, 'Ω', '0R'], [4.7e-9, 'F', '4n7'], [100e-12, 'F', '100p'], [1e-6, 'F', '1u0'],
    [10e-6, 'H', '10u'], [7.03e6, 'Hz', '7M03'], [32768, 'Hz', '32k768'], [4.7, 'V', '4V7'],
  ])('%d %s → %s', (v, u, code) => {
    expect(toLetterCode(v, u)).toBe(code)
  })

  it('refuses units without a letter code and negative values', () => {
    expect(() => toLetterCode(1, 'K')).toThrow(/No letter code/)
    expect(() => toLetterCode(-1, 'Ω')).toThrow(/Cannot write/)
  })

  it.each([
    ['resistor', 'Ω', -2, 12],
    ['capacitor', 'F', -12, 1],
    ['inductor', 'H', -9, 1],
    ['crystal', 'Hz', 3, 9],
  ])('round trip through parseValue for %s values', (kind, unit, lo, hi) => {
    fc.assert(fc.property(fc.double({ min: lo, max: hi, noNaN: true }), (e) => {
      const v = 10 ** e
      const back = parseValue(toLetterCode(v, unit), kind)
      return back.unit === unit && close(back.value, v)
    }), { numRuns: 2000 })
  })
})

describe('colour bands (IEC 60062:2016)', () => {
  it.each([
    [['yellow', 'violet', 'red', 'gold'], 4700, 5],
    [['brown', 'black', 'red', 'gold'], 1000, 5],
    [['red', 'red', 'orange', 'silver'], 22000, 10],
    [['brown', 'black', 'black', 'gold', 'brown'], 10, 1],
    [['yellow', 'violet', 'black', 'brown', 'brown'], 4700, 1],
    [['brown', 'black', 'gold', 'red'], 1, 2],
    [['yellow', 'violet', 'silver', 'green'], 0.47, 0.5],
    [['yellow', 'violet', 'pink', 'blue'], 0.047, 0.25],
    [['brown', 'black', 'white', 'violet'], 10e9, 0.1],
    [['grey', 'red', 'brown', 'grey'], 820, 0.05],
    [['GRAY', 'Red', 'brown'], 820, 20], // 3 bands: no tolerance band means ±20 %
    [['orange', 'orange', 'black', 'yellow'], 33, 0.02],
  ])('%j → %d Ω ±%d %%', (bands, value, tolerance) => {
    const r = decodeColourBands(bands)
    expect(close(r.value, value)).toBe(true)
    expect(r.tolerance).toBe(tolerance)
  })

  it.each([
    [['yellow', 'violet'], /3, 4 or 5/],
    [['yellow', 'violet', 'red', 'gold', 'brown', 'red'], /3, 4 or 5/],
    [['yellow', 'mauve', 'red'], /not a resistor band colour/],
    [['gold', 'violet', 'red', 'yellow'], /Band 1 is gold/],
    [['black', 'brown', 'red', 'gold'], /cannot be black/],
    [['yellow', 'violet', 'red', 'white'], /not a tolerance colour/],
    [['yellow', 'violet', 'red', 'black'], /not a tolerance colour/],
  ])('%j is refused', (bands, message) => {
    expect(() => decodeColourBands(bands)).toThrow(message)
  })

  it('encodes 4- and 5-band codes', () => {
    expect(encodeColourBands(4700, 5, 4)).toEqual(['yellow', 'violet', 'red', 'gold'])
    expect(encodeColourBands(4700, 1, 5)).toEqual(['yellow', 'violet', 'black', 'brown', 'brown'])
    expect(encodeColourBands(0.47, 10, 4)).toEqual(['yellow', 'violet', 'silver', 'silver'])
    expect(encodeColourBands(1, 5, 4)).toEqual(['brown', 'black', 'gold', 'gold'])
    expect(encodeColourBands(4990, 1, 5)).toEqual(['yellow', 'white', 'white', 'brown', 'brown'])
  })

  it('refuses what the bands cannot hold', () => {
    expect(() => encodeColourBands(4990, 1, 4)).toThrow(/more than 2 digits/)
    expect(() => encodeColourBands(4700, 20, 4)).toThrow(/No tolerance band colour/)
    expect(() => encodeColourBands(0, 5, 4)).toThrow(/Cannot write/)
    expect(() => encodeColourBands(1e12, 5, 4)).toThrow(/out of the colour code's range/)
  })

  it('round trip for E24 values from 0.1 Ω to 91 MΩ (4 and 5 bands)', () => {
    const e24 = eSeries('E24')
    fc.assert(fc.property(fc.constantFrom(...e24), fc.integer({ min: -1, max: 7 }), fc.constantFrom(1, 2, 5, 10), fc.constantFrom(4 as const, 5 as const), (m, d, tol, n) => {
      const ohms = Number(`${m}e${d}`)
      const r = decodeColourBands(encodeColourBands(ohms, tol, n))
      return close(r.value, ohms) && r.tolerance === tol
    }), { numRuns: 400 })
  })
})

describe('capacitor three-digit code (IEC 60062:2016, value in pF)', () => {
  it.each([
    ['104', 100e-9], ['103', 10e-9], ['102', 1e-9], ['472', 4.7e-9], ['222', 2.2e-9], ['101', 100e-12], ['100', 10e-12],
    ['479', 4.7e-12], ['109', 1e-12], ['108', 0.1e-12], ['105', 1e-6], ['104K', 100e-9],
  ])('%s = %d F', (code, farads) => {
    expect(close(decodeCapCode(code), farads)).toBe(true)
  })

  it('refuses 7 as a multiplier and anything not three digits', () => {
    expect(() => decodeCapCode('107')).toThrow(/not a multiplier digit/)
    expect(() => decodeCapCode('10')).toThrow(/three digits/)
    expect(() => decodeCapCode('1044')).toThrow(/three digits/)
    expect(() => decodeCapCode('n10')).toThrow(/three digits/)
  })

  it('encodes, and round trips E12 values from 1 pF to 1 µF', () => {
    expect(encodeCapCode(100e-9)).toBe('104')
    expect(encodeCapCode(4.7e-12)).toBe('479')
    expect(() => encodeCapCode(4.75e-9)).toThrow(/more than two digits/)
    expect(() => encodeCapCode(10e-3)).toThrow(/out of the capacitor code's range/)
    for (const m of eSeries('E12')) {
      for (let d = -12; d <= -7; d++) {
        const f = Number(`${m}e${d}`)
        expect(close(decodeCapCode(encodeCapCode(f)), f)).toBe(true)
      }
    }
  })
})

// The EIA-96 table, written out from memory: code number n → three-digit E96 value.
const EIA96_TABLE: [string, number][] = [
  ['01', 100], ['02', 102], ['03', 105], ['04', 107], ['05', 110], ['06', 113], ['07', 115], ['08', 118], ['09', 121],
  ['10', 124], ['11', 127], ['12', 130], ['13', 133], ['14', 137], ['15', 140], ['16', 143], ['17', 147], ['18', 150],
  ['19', 154], ['20', 158], ['21', 162], ['22', 165], ['23', 169], ['24', 174], ['25', 178], ['26', 182], ['27', 187],
  ['28', 191], ['29', 196], ['30', 200], ['31', 205], ['32', 210], ['33', 215], ['34', 221], ['35', 226], ['36', 232],
  ['37', 237], ['38', 243], ['39', 249], ['40', 255], ['41', 261], ['42', 267], ['43', 274], ['44', 280], ['45', 287],
  ['46', 294], ['47', 301], ['48', 309], ['49', 316], ['50', 324], ['51', 332], ['52', 340], ['53', 348], ['54', 357],
  ['55', 365], ['56', 374], ['57', 383], ['58', 392], ['59', 402], ['60', 412], ['61', 422], ['62', 432], ['63', 442],
  ['64', 453], ['65', 464], ['66', 475], ['67', 487], ['68', 499], ['69', 511], ['70', 523], ['71', 536], ['72', 549],
  ['73', 562], ['74', 576], ['75', 590], ['76', 604], ['77', 619], ['78', 634], ['79', 649], ['80', 665], ['81', 681],
  ['82', 698], ['83', 715], ['84', 732], ['85', 750], ['86', 768], ['87', 787], ['88', 806], ['89', 825], ['90', 845],
  ['91', 866], ['92', 887], ['93', 909], ['94', 931], ['95', 953], ['96', 976],
]

describe('SMD resistor codes', () => {
  it('EIA-96 table: every code number with multiplier A (×1)', () => {
    for (const [n, v] of EIA96_TABLE) expect(decodeSmdCode(`${n}A`)).toBeCloseTo(v, 9)
  })

  it('EIA-96 letter multipliers (from memory): Z 0.001, Y/R 0.01, X/S 0.1, A 1, B/H 10, C 100, D 1000, E 10⁴, F 10⁵', () => {
    const expected: Record<string, number> = { Z: 0.001, Y: 0.01, R: 0.01, X: 0.1, S: 0.1, A: 1, B: 10, H: 10, C: 100, D: 1000, E: 10000, F: 100000 }
    expect(EIA96_MULTIPLIERS).toEqual(expected)
    for (const [letter, mult] of Object.entries(expected)) {
      expect(close(decodeSmdCode(`68${letter}`), 499 * mult)).toBe(true)
    }
  })

  it.each([
    ['01C', 10000], ['01c', 10000], ['68X', 49.9], ['01Z', 0.1], ['96F', 97.6e6], ['30B', 2000], ['44D', 280000],
  ])('EIA-96 %s = %d Ω', (code, ohms) => {
    expect(close(decodeSmdCode(code), ohms)).toBe(true)
  })

  it.each([
    ['472', 4700], ['103', 10000], ['100', 10], ['220', 22], ['000', 0], ['0', 0], ['4701', 4700], ['1002', 10000],
    ['49R9', 49.9], ['4R7', 4.7], ['R10', 0.1], ['0R1', 0.1], ['10R0', 10],
  ])('3-/4-digit and R codes (common practice): %s = %d Ω', (code, ohms) => {
    expect(close(decodeSmdCode(code), ohms)).toBe(true)
  })

  it.each(['', 'R', '97A', '00A', '01Q', '4k7', '47', '47001', 'R4R7', '12345'])('%j is refused', (code) => {
    expect(() => decodeSmdCode(code)).toThrow(/not an (SMD resistor|EIA-96) code/)
  })
})

describe('E-series (IEC 60063:2015)', () => {
  it('E3, E6, E12 and E24 are the published lists', () => {
    expect(eSeries('E3')).toEqual([1.0, 2.2, 4.7])
    expect(eSeries('E6')).toEqual([1.0, 1.5, 2.2, 3.3, 4.7, 6.8])
    expect(eSeries('E12')).toEqual([1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2])
    expect(eSeries('E24')).toEqual([
      1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
    ])
  })

  it('E24 differs from round(10^(i/24)) exactly at 2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2', () => {
    const differing = eSeries('E24').filter((v, i) => Number((10 ** (i / 24)).toFixed(1)) !== v)
    expect(differing).toEqual([2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2])
  })

  it('lengths', () => {
    expect(SERIES_NAMES.map((n) => eSeries(n).length)).toEqual([3, 6, 12, 24, 48, 96, 192])
  })

  it('E96 is the EIA-96 table', () => {
    expect(eSeries('E96').map((v) => Math.round(v * 100))).toEqual(EIA96_TABLE.map(([, v]) => v))
  })

  it('spot values of E48, E96 and E192, including E192\u2019s published 9.20', () => {
    const e48 = eSeries('E48')
    const e192 = eSeries('E192')
    expect(e48.slice(0, 6)).toEqual([1.0, 1.05, 1.1, 1.15, 1.21, 1.27])
    expect(e48[47]).toBe(9.53)
    expect(eSeries('E96')[95]).toBe(9.76)
    expect(e192.slice(0, 4)).toEqual([1.0, 1.01, 1.02, 1.04])
    expect(e192[185]).toBe(9.2)
    expect(e192).not.toContain(9.19)
    expect(e192[191]).toBe(9.88)
    expect(e192).toContain(4.99)
  })

  it('E48 ⊂ E96 ⊂ E192 and E6 ⊂ E12 ⊂ E24 (IEC 60063 construction)', () => {
    for (const [a, b] of [['E3', 'E6'], ['E6', 'E12'], ['E12', 'E24'], ['E48', 'E96'], ['E96', 'E192']] as const) {
      for (const v of eSeries(a)) expect(eSeries(b)).toContain(v)
    }
  })

  it('eSeries returns a copy', () => {
    const list = eSeries('E6')
    list[0] = 99
    expect(eSeries('E6')[0]).toBe(1)
  })

  it('inSeries works in any decade and tolerates float error', () => {
    expect(inSeries(4700, 'E12')).toBe(true)
    expect(inSeries(0.0047, 'E6')).toBe(true)
    expect(inSeries(4.7e-9, 'E3')).toBe(true)
    expect(inSeries(0.1 + 0.2, 'E24')).toBe(true) // 0.30000000000000004
    expect(inSeries(1e6, 'E3')).toBe(true)
    expect(inSeries(5100, 'E12')).toBe(false)
    expect(inSeries(5100, 'E24')).toBe(true)
    expect(inSeries(9190, 'E192')).toBe(false)
    expect(inSeries(9200, 'E192')).toBe(true)
    expect(inSeries(0, 'E12')).toBe(false)
    expect(inSeries(-4700, 'E12')).toBe(false)
  })

  it('nearestInSeries is nearest on a log scale, crossing into the next decade', () => {
    expect(nearestInSeries(5000, 'E12')).toBe(4700)
    expect(nearestInSeries(5200, 'E12')).toBe(5600)
    expect(nearestInSeries(9500, 'E12')).toBe(10000)
    expect(nearestInSeries(3.05e-9, 'E24')).toBe(3.0e-9)
    expect(nearestInSeries(1234, 'E96')).toBe(1240)
    // √(8.2·10) ≈ 9.055: the log midpoint between 8.2 and 10
    expect(nearestInSeries(9.05, 'E12')).toBe(8.2)
    expect(nearestInSeries(9.06, 'E12')).toBe(10)
    expect(() => nearestInSeries(0, 'E12')).toThrow(/No preferred value/)
  })

  it('smallestSeries', () => {
    expect(smallestSeries(4700)).toBe('E3')
    expect(smallestSeries(33e-9)).toBe('E6')
    expect(smallestSeries(5600)).toBe('E12')
    expect(smallestSeries(5100)).toBe('E24')
    expect(smallestSeries(4870)).toBe('E48')
    expect(smallestSeries(4990)).toBe('E96')
    expect(smallestSeries(1020)).toBe('E96')
    expect(smallestSeries(1010)).toBe('E192')
    expect(smallestSeries(1234)).toBeUndefined()
  })
})

describe('findCombination (series/parallel laws, any circuit-theory textbook)', () => {
  it('resistors: parallel of two equal resistors halves the value; series adds', () => {
    const r = findCombination(5000, 'resistor', [10000, 4700, 330, 1000], 1)
    expect(r[0]).toEqual({ parts: [10000, 10000], arrangement: 'parallel', value: 5000, errorPct: 0 })
    expect(r[1]).toMatchObject({ parts: [330, 4700], arrangement: 'series', value: 5030 })
    expect(r[1]!.errorPct).toBeCloseTo(0.6, 9)
    expect(r).toHaveLength(2)
  })

  it('capacitors are the reverse: parallel adds, series reciprocal-adds', () => {
    const r = findCombination(150e-9, 'capacitor', [100e-9, 47e-9, 220e-9, 470e-9], 2)
    expect(r.map((c) => c.arrangement)).toEqual(['series', 'parallel'])
    // series: 220·470/(220+470) = 149.86 nF; parallel: 100 + 47 = 147 nF
    expect(r[0]!.parts).toEqual([220e-9, 470e-9])
    expect(close(r[0]!.value, (220e-9 * 470e-9) / (690e-9))).toBe(true)
    expect(r[1]!.parts).toEqual([47e-9, 100e-9])
  })

  it('a stocked value itself comes first at equal error, and fewer parts win ties', () => {
    const r = findCombination(2000, 'resistor', [1000, 2000, 4000], 0)
    expect(r.map((c) => c.arrangement)).toEqual(['single', 'series', 'parallel'])
    expect(r[2]!.parts).toEqual([4000, 4000])
  })

  it('nothing within tolerance gives an empty list; bad input throws', () => {
    expect(findCombination(3000, 'resistor', [10, 20], 5)).toEqual([])
    expect(() => findCombination(0, 'resistor', [10], 5)).toThrow(/above zero/)
    expect(() => findCombination(10, 'resistor', [10], -1)).toThrow(/tolerance/)
  })

  it('agrees with checking every pair by brute force (property)', () => {
    fc.assert(fc.property(
      fc.uniqueArray(fc.constantFrom(...eSeries('E12').flatMap((m) => [m * 100, m * 1000, m * 10000])), { minLength: 1, maxLength: 20 }),
      fc.double({ min: 2, max: 5, noNaN: true }),
      fc.constantFrom('resistor' as const, 'capacitor' as const),
      (stocked, e, kind) => {
        const target = 10 ** e
        const got = findCombination(target, kind, stocked, 5, 10_000)
        let count = stocked.filter((v) => Math.abs(v - target) / target <= 0.05).length
        for (let i = 0; i < stocked.length; i++) {
          for (let j = i; j < stocked.length; j++) {
            const a = stocked[i]!
            const b = stocked[j]!
            for (const v of [a + b, (a * b) / (a + b)]) if (Math.abs(v - target) / target <= 0.05) count++
          }
        }
        const sorted = got.every((c, k) => k === 0 || Math.abs(got[k - 1]!.errorPct) <= Math.abs(c.errorPct) + 1e-9)
        return got.length === count && sorted
      },
    ), { numRuns: 200 })
  })
})

describe('describeValue', () => {
  it('resistor: formatted, letter code, 4 bands with 5 % gold by default, series', () => {
    expect(describeValue('4k7', 'resistor')).toEqual({
      value: 4700, unit: 'Ω', formatted: '4.7 kΩ', letterCode: '4k7', bands: ['yellow', 'violet', 'red', 'gold'], series: 'E3',
    })
    expect(describeValue('4K7F', 'resistor').bands).toEqual(['yellow', 'violet', 'red', 'brown'])
    expect(describeValue('4.99k', 'resistor').bands).toBeUndefined()
  })

  it('capacitor: capacitor code', () => {
    expect(describeValue('100n', 'capacitor')).toMatchObject({ formatted: '100 nF', letterCode: '100n', capCode: '104', series: 'E3' })
    expect(describeValue('100n', 'capacitor').bands).toBeUndefined()
  })

  it('crystal: no series', () => {
    expect(describeValue('7.030 MHz', 'crystal')).toEqual({ value: 7.03e6, unit: 'Hz', formatted: '7.03 MHz', letterCode: '7M03' })
  })

  it('throws like parseValue', () => {
    expect(() => describeValue('4k7k')).toThrow(/not a value/)
  })
})

describe('valueQueries for catalogue search', () => {
  it('values in any spelling', () => {
    expect(valueQueries('4k7')).toEqual([{ value: 4700 }])
    expect(valueQueries('4.7k')).toEqual([{ value: 4700 }])
    expect(valueQueries('4700')).toEqual([{ value: 4700 }])
    expect(valueQueries('4.7 kΩ')).toEqual([{ value: 4700, unit: 'Ω' }])
    expect(valueQueries('4R7')).toEqual([{ value: 4.7, unit: 'Ω' }])
  })

  it('colour bands, three or more colour words (IEC 60062)', () => {
    expect(valueQueries('yellow violet red')).toEqual([{ value: 4700, unit: 'Ω' }])
    expect(valueQueries('Brown, Black, Orange, Gold')).toEqual([{ value: 10000, unit: 'Ω' }])
    expect(valueQueries('yellow violet')).toEqual([])
    expect(valueQueries('black brown red')).toEqual([])
  })

  it('three digits read as a number, an SMD code and a capacitor code', () => {
    const r = valueQueries('472')
    expect(r).toHaveLength(3)
    expect(r[0]).toEqual({ value: 472 })
    expect(r[1]).toEqual({ value: 4700, unit: 'Ω' })
    expect(r[2]!.unit).toBe('F')
    expect(close(r[2]!.value, 4.7e-9)).toBe(true)
    expect(valueQueries('104').map((x) => x.unit)).toEqual([undefined, 'Ω', 'F'])
  })

  it('a kind keeps its own unit and unitless readings', () => {
    expect(valueQueries('104', 'capacitor').map((x) => x.unit)).toEqual([undefined, 'F'])
    expect(valueQueries('4R7', 'capacitor')).toEqual([])
  })

  it('EIA-96 and four-digit codes', () => {
    expect(valueQueries('01C')[0]).toEqual({ value: 10000, unit: 'Ω' })
    expect(valueQueries('4701')).toEqual([{ value: 4701 }, { value: 4700, unit: 'Ω' }])
  })

  it('nothing readable gives [] and valueQuery null', () => {
    expect(valueQueries('')).toEqual([])
    expect(valueQueries('LM386')).toEqual([])
    expect(valueQuery('LM386')).toBeNull()
    expect(valueQuery('4k7')).toEqual({ value: 4700 })
  })
})

describe('sameValue (relative 1e-9)', () => {
  it('is relative, not absolute', () => {
    expect(sameValue(4700, 4700 * (1 + 5e-10))).toBe(true)
    expect(sameValue(4700, 4700 * (1 + 2e-9))).toBe(false)
    expect(sameValue(1e-12, 1.0000000001e-12)).toBe(true)
    expect(sameValue(1e-12, 2e-12)).toBe(false)
    expect(sameValue(0, 0)).toBe(true)
    expect(sameValue(0.1 + 0.2, 0.3)).toBe(true)
  })
})

describe('values that round to a prefix boundary (found by the property tests)', () => {
  it('10^(−2.17e−13) F (just under 1 F) reads back; 0.99999999999999 F is written 1F0 and 1 F', () => {
    const v = 10 ** -2.171424372811907e-13
    expect(close(parseValue(toLetterCode(v, 'F'), 'capacitor').value, v)).toBe(true)
    expect(toLetterCode(0.99999999999999, 'F')).toBe('1F0')
    expect(formatValue(0.99999999999999, 'F')).toBe('1 F')
    expect(formatValue(999.99999999999994, 'Ω')).toBe('1 kΩ')
    expect(toLetterCode(0.000999999999999999, 'F')).toBe('1m0')
  })
})
