import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import {
  checkGroup,
  DEFAULT_PARAMETRIC,
  dielectricFamily,
  parametricStandIn,
  standInsFor,
  swapPairs,
  type ParametricSettings,
  type SwapGroup,
  type SwapPart,
} from '../../shared/utils/swaps'

// Check values: the parametric rules are common practice for passives — a stand-in must have the
// same value and at least the original's ratings (power, voltage, current), a tolerance at least
// as tight, and a ceramic dielectric at least as stable (EIA class 1 C0G/NP0 > X7R > X5R > Y5V);
// electrolytics keep their polarity. Group semantics are Kitwright's own (see swaps.ts).

const R = (id: string, over: Partial<SwapPart> = {}): SwapPart =>
  ({ id, kind: 'resistor', value: 4700, tolerancePct: 5, powerW: 0.25, mounting: 'tht', ...over })
const C = (id: string, over: Partial<SwapPart> = {}): SwapPart =>
  ({ id, kind: 'capacitor', value: 100e-9, voltageV: 50, tolerancePct: 10, dielectric: 'X7R', mounting: 'tht', ...over })
const L = (id: string, over: Partial<SwapPart> = {}): SwapPart =>
  ({ id, kind: 'inductor', value: 10e-6, currentA: 0.5, mounting: 'tht', ...over })
const ALL_ON: ParametricSettings = { ...DEFAULT_PARAMETRIC }

describe('parametricStandIn: resistors', () => {
  it('same value, tighter tolerance, more power, same mounting: allowed, with a plain reason', () => {
    expect(parametricStandIn(R('a'), R('b', { tolerancePct: 1, powerW: 0.5 }))).toEqual({
      ok: true,
      reason: 'same value 4.7 kΩ, tolerance 1 % ≤ 5 %, 0.5 W ≥ 0.25 W, both through-hole',
    })
  })

  it('equal ratings are enough', () => {
    expect(parametricStandIn(R('a'), R('b')).ok).toBe(true)
  })

  it('a value equal within float error counts as the same (4.7e3 vs 4700.000000000001)', () => {
    expect(parametricStandIn(R('a'), R('b', { value: 4.7 * 1000 + 1e-9 })).ok).toBe(true)
  })

  it.each([
    [{ value: 10000 }, 'value 10 kΩ differs from 4.7 kΩ'],
    [{ tolerancePct: 10 }, 'tolerance 10 % is looser than 5 %'],
    [{ powerW: 0.125 }, 'power rating 0.125 W is below 0.25 W'],
    [{ mounting: 'smd' as const }, 'surface-mount does not fit through-hole'],
    [{ tolerancePct: null }, "the candidate's tolerance is unknown (needs 5 % or tighter)"],
    [{ powerW: null }, "the candidate's power rating is unknown (needs 0.25 W or more)"],
    [{ mounting: null }, "the candidate's mounting is unknown (needs through-hole)"],
    [{ value: null }, "the candidate's value is unknown (needs 4.7 kΩ)"],
  ])('refused: %j', (over, reason) => {
    expect(parametricStandIn(R('a'), R('b', over))).toEqual({ ok: false, reason })
  })

  it('lists every refusal', () => {
    const r = parametricStandIn(R('a'), R('b', { tolerancePct: 10, powerW: null, mounting: 'smd' }))
    expect(r.ok).toBe(false)
    expect(r.reason.split('; ')).toHaveLength(3)
  })

  it('a rating the original does not state is not checked', () => {
    const r = parametricStandIn(R('a', { powerW: null, tolerancePct: null, mounting: null }), R('b', { powerW: 0.1, tolerancePct: 20 }))
    expect(r).toEqual({ ok: true, reason: 'same value 4.7 kΩ' })
  })

  it('an original without a value has nothing to match', () => {
    expect(parametricStandIn(R('a', { value: null }), R('b'))).toEqual({ ok: false, reason: 'the original has no value to match' })
  })

  it('a part never stands in for itself', () => {
    expect(parametricStandIn(R('a'), R('a'))).toEqual({ ok: false, reason: 'a part does not stand in for itself' })
  })

  it('kinds must match, and only passives have parametric rules', () => {
    expect(parametricStandIn(R('a'), C('b', { value: 4700 })).reason).toBe('a capacitor cannot replace a resistor')
    const d = (id: string): SwapPart => ({ id, kind: 'diode', value: null })
    expect(parametricStandIn(d('x'), d('y'))).toEqual({ ok: false, reason: 'no parametric rule for diode parts: use an interchangeable group' })
  })
})

describe('parametricStandIn: capacitors', () => {
  it('same value, higher voltage, tighter tolerance, better dielectric: allowed', () => {
    expect(parametricStandIn(C('a'), C('b', { voltageV: 100, tolerancePct: 5, dielectric: 'C0G' }))).toEqual({
      ok: true,
      reason: 'same value 100 nF, 100 V ≥ 50 V, tolerance 5 % ≤ 10 %, C0G can replace X7R, both through-hole',
    })
  })

  it('a C0G filter capacitor is not replaced by X7R', () => {
    const filter = C('c0g', { value: 470e-12, dielectric: 'C0G', tolerancePct: 5 })
    const r = parametricStandIn(filter, C('x7r', { value: 470e-12, dielectric: 'X7R', tolerancePct: 5 }))
    expect(r).toEqual({ ok: false, reason: 'X7R cannot replace C0G (only C0G/NP0)' })
  })

  it('NP0 is C0G', () => {
    expect(parametricStandIn(C('a', { dielectric: 'NP0' }), C('b', { dielectric: 'C0G' })).ok).toBe(true)
    expect(parametricStandIn(C('a', { dielectric: 'C0G' }), C('b', { dielectric: 'npo' })).ok).toBe(true)
    expect(dielectricFamily('C0G/NP0')).toBe('C0G')
    expect(dielectricFamily('COG')).toBe('C0G')
  })

  // Ceramic stability order (EIA class 1 and class 2 codes, common practice): C0G > X7R > X5R > Y5V.
  const ceramicTable: [string, string, boolean][] = []
  const order = ['Y5V', 'X5R', 'X7R', 'C0G']
  for (const o of order) for (const c of order) ceramicTable.push([o, c, order.indexOf(c) >= order.indexOf(o)])
  it.each(ceramicTable)('%s replaced by %s: %s', (orig, cand, ok) => {
    expect(parametricStandIn(C('a', { dielectric: orig }), C('b', { dielectric: cand })).ok).toBe(ok)
  })

  it('electrolytic only by electrolytic, keeping polarity', () => {
    const elko = (id: string, over: Partial<SwapPart> = {}) =>
      C(id, { value: 100e-6, dielectric: 'electrolytic', polarised: true, voltageV: 25, tolerancePct: 20, ...over })
    expect(parametricStandIn(elko('a'), elko('b', { voltageV: 35 }))).toEqual({
      ok: true,
      reason: 'same value 100 µF, 35 V ≥ 25 V, tolerance 20 % ≤ 20 %, both electrolytic, both polarised, both through-hole',
    })
    expect(parametricStandIn(elko('a'), elko('b', { dielectric: 'X5R', polarised: false })).reason)
      .toBe('X5R cannot replace electrolytic; a non-polarised part cannot replace a polarised one')
    expect(parametricStandIn(elko('a'), elko('b', { polarised: false })).reason).toBe('a non-polarised part cannot replace a polarised one')
    expect(parametricStandIn(elko('a'), elko('b', { polarised: null })).reason).toBe("the candidate's polarity is unknown (needs a polarised part)")
    expect(parametricStandIn(elko('a', { polarised: false }), elko('b')).reason).toBe('a polarised part cannot replace a non-polarised one')
    expect(parametricStandIn(elko('a', { polarised: false }), elko('b', { polarised: null })).reason)
      .toBe("the candidate's polarity is unknown (needs a non-polarised part)")
    expect(parametricStandIn(C('x', { value: 100e-6, dielectric: 'X5R', voltageV: 25, tolerancePct: 20 }), elko('b')).reason)
      .toBe('electrolytic cannot replace X5R')
  })

  it('film only by film', () => {
    expect(parametricStandIn(C('a', { dielectric: 'film' }), C('b', { dielectric: 'Polyester film' })).ok).toBe(true)
    expect(parametricStandIn(C('a', { dielectric: 'film' }), C('b', { dielectric: 'C0G' })).reason).toBe('C0G cannot replace film')
    expect(parametricStandIn(C('a', { dielectric: 'C0G' }), C('b', { dielectric: 'film' })).reason).toBe('film cannot replace C0G')
  })

  it.each([
    [{ voltageV: 25 }, 'voltage rating 25 V is below 50 V'],
    [{ voltageV: null }, "the candidate's voltage rating is unknown (needs 50 V or more)"],
    [{ dielectric: null }, "the candidate's dielectric is unknown (needs one that can replace X7R)"],
    [{ tolerancePct: 20 }, 'tolerance 20 % is looser than 10 %'],
    [{ value: 47e-9 }, 'value 47 nF differs from 100 nF'],
  ])('refused: %j', (over, reason) => {
    expect(parametricStandIn(C('a'), C('b', over))).toEqual({ ok: false, reason })
  })
})

describe('parametricStandIn: inductors', () => {
  it('same inductance and equal or higher current', () => {
    expect(parametricStandIn(L('a'), L('b', { currentA: 1 }))).toEqual({
      ok: true, reason: 'same value 10 µH, 1 A ≥ 0.5 A, both through-hole',
    })
    expect(parametricStandIn(L('a'), L('b', { currentA: 0.3 })).reason).toBe('current rating 0.3 A is below 0.5 A')
    expect(parametricStandIn(L('a'), L('b', { currentA: null })).reason).toBe("the candidate's current rating is unknown (needs 0.5 A or more)")
    expect(parametricStandIn(L('a'), L('b', { value: 22e-6 })).reason).toBe('value 22 µH differs from 10 µH')
  })
})

const NPN_GROUP: SwapGroup = {
  id: 'g-npn',
  name: 'Small-signal NPN',
  members: [{ partId: 'q1', direction: 'both' }, { partId: 'q2', direction: 'both' }],
  warning: 'Pinout differs: EBC vs CBE, turn the part round',
}

describe('standInsFor', () => {
  const parts: SwapPart[] = [
    R('r1'), R('r2', { tolerancePct: 1 }), R('r3', { tolerancePct: 10 }), R('r4', { value: 10000 }),
    C('c1', { dielectric: 'C0G' }), C('c2'),
    { id: 'q1', kind: 'transistor' }, { id: 'q2', kind: 'transistor' }, { id: 'q3', kind: 'transistor' },
  ]

  it('parametric stand-ins of the same kind and value only', () => {
    const s = standInsFor('r1', parts, [], ALL_ON)
    expect(s.map((x) => x.partId)).toEqual(['r2'])
    expect(s[0]).toMatchObject({ source: 'parametric', warning: null })
    expect(s[0]!.reason).toContain('tolerance 1 % ≤ 5 %')
  })

  it('a group stand-in carries the group\u2019s pinout warning', () => {
    const s = standInsFor('q1', parts, [NPN_GROUP], ALL_ON)
    expect(s).toEqual([{
      partId: 'q2', reason: 'interchangeable group "Small-signal NPN"', warning: 'Pinout differs: EBC vs CBE, turn the part round',
      source: 'group', groupId: 'g-npn',
    }])
  })

  it('parametric rules switch off per kind', () => {
    expect(standInsFor('r1', parts, [], { ...ALL_ON, resistor: false })).toEqual([])
    expect(standInsFor('c2', parts, [], ALL_ON).map((x) => x.partId)).toEqual(['c1'])
    expect(standInsFor('c2', parts, [], { ...ALL_ON, capacitor: false })).toEqual([])
  })

  it('a line marked "no stand-ins" gets none', () => {
    expect(standInsFor('q1', parts, [NPN_GROUP], ALL_ON, { noStandIns: true })).toEqual([])
    expect(standInsFor('r1', parts, [], ALL_ON, { noStandIns: true })).toEqual([])
  })

  it('directions: "replaces" stands in but is not replaced; "replaced" is replaced but does not stand in', () => {
    const g: SwapGroup = {
      id: 'g', name: 'Audio amp', members: [
        { partId: 'q1', direction: 'replaced' }, { partId: 'q2', direction: 'replaces' }, { partId: 'q3', direction: 'both' },
      ],
    }
    expect(standInsFor('q1', parts, [g], ALL_ON).map((x) => x.partId)).toEqual(['q2', 'q3'])
    expect(standInsFor('q2', parts, [g], ALL_ON)).toEqual([])
    expect(standInsFor('q3', parts, [g], ALL_ON).map((x) => x.partId)).toEqual(['q2'])
    expect(standInsFor('q3', parts, [g], ALL_ON)[0]!.warning).toBeNull()
  })

  it('a group wins over a parametric rule and warnings of several groups are all kept', () => {
    const g1: SwapGroup = { id: 'g1', name: 'A', members: [{ partId: 'r1', direction: 'both' }, { partId: 'r2', direction: 'both' }], warning: 'longer leads' }
    const g2: SwapGroup = { id: 'g2', name: 'B', members: [{ partId: 'r1', direction: 'both' }, { partId: 'r2', direction: 'both' }], warning: 'blue body' }
    const s = standInsFor('r1', parts, [g1, g2], ALL_ON)
    expect(s).toHaveLength(1)
    expect(s[0]).toMatchObject({ partId: 'r2', source: 'group', groupId: 'g1', warning: 'longer leads; blue body' })
  })

  it('not transitive: a stand-in\u2019s stand-ins are not offered', () => {
    const g1: SwapGroup = { id: 'g1', name: 'A', members: [{ partId: 'q1', direction: 'replaced' }, { partId: 'q2', direction: 'replaces' }] }
    const g2: SwapGroup = { id: 'g2', name: 'B', members: [{ partId: 'q2', direction: 'replaced' }, { partId: 'q3', direction: 'replaces' }] }
    expect(standInsFor('q1', parts, [g1, g2], ALL_ON).map((x) => x.partId)).toEqual(['q2'])
  })

  it('an unknown part has no parametric stand-ins', () => {
    expect(standInsFor('nope', parts, [], ALL_ON)).toEqual([])
  })
})

describe('swapPairs', () => {
  it('lists group and parametric pairs, group first', () => {
    const parts = [R('r1'), R('r2', { tolerancePct: 1 }), { id: 'q1', kind: 'transistor' as const }, { id: 'q2', kind: 'transistor' as const }]
    const pairs = swapPairs(parts, [NPN_GROUP], ALL_ON)
    expect(pairs.map((p) => `${p.from}>${p.to}`)).toEqual(['q1>q2', 'q2>q1', 'r1>r2'])
    expect(pairs[0]!.warning).toBe(NPN_GROUP.warning)
    expect(pairs[2]!.warning).toBeNull()
  })

  it('agrees with standInsFor for every part (property, bucketed vs direct)', () => {
    const partArb = fc.record({
      kind: fc.constantFrom('resistor' as const, 'capacitor' as const, 'inductor' as const),
      value: fc.constantFrom(1000, 4700, 1e-7, 1e-5, null),
      tolerancePct: fc.constantFrom(1, 5, 10, null),
      powerW: fc.constantFrom(0.25, 0.5, null),
      voltageV: fc.constantFrom(16, 50, null),
      currentA: fc.constantFrom(0.2, 1, null),
      dielectric: fc.constantFrom('C0G', 'X7R', 'X5R', 'electrolytic', null),
      mounting: fc.constantFrom('tht' as const, 'smd' as const, null),
    })
    fc.assert(fc.property(fc.array(partArb, { maxLength: 25 }), fc.boolean(), (raw, capOn) => {
      const parts: SwapPart[] = raw.map((p, i) => ({ ...p, id: `p${i}` }))
      const settings = { resistor: true, capacitor: capOn, inductor: true }
      const fromPairs = swapPairs(parts, [], settings).map((p) => `${p.from}>${p.to}`).sort()
      const direct = parts.flatMap((p) => standInsFor(p.id, parts, [], settings).map((s) => `${p.id}>${s.partId}`)).sort()
      return JSON.stringify(fromPairs) === JSON.stringify(direct)
    }), { numRuns: 300 })
  })

  it('handles 2,000 parts without comparing every pair', () => {
    const values = [100, 220, 470, 1000, 2200, 4700, 10000, 22000, 47000, 100000]
    const parts: SwapPart[] = Array.from({ length: 2000 }, (_, i) =>
      R(`r${i}`, { value: values[i % 10]!, tolerancePct: [1, 5][Math.floor(i / 10) % 2]!, powerW: 0.25 }))
    const pairs = swapPairs(parts, [], ALL_ON)
    // Each value has 200 parts, 100 at 1 % and 100 at 5 %: a 5 % original takes any of the other
    // 199, a 1 % original only the other 99 at 1 %.
    expect(pairs).toHaveLength(10 * (100 * 199 + 100 * 99))
    expect(pairs.every((p) => p.from !== p.to)).toBe(true)
  })
})

describe('checkGroup', () => {
  const ok: SwapGroup = { id: 'g', name: 'NPN', members: [{ partId: 'a', direction: 'both' }, { partId: 'b', direction: 'both' }] }

  it('a sound group has no problems', () => {
    expect(checkGroup(ok, [])).toEqual([])
    expect(checkGroup(ok, [ok])).toEqual([])
  })

  it('fewer than two members', () => {
    expect(checkGroup({ ...ok, members: [{ partId: 'a', direction: 'both' }] }, [])).toContain('A group needs at least two different parts')
  })

  it('a member twice, and a part that would stand in for itself', () => {
    const p = checkGroup({ ...ok, members: [...ok.members, { partId: 'a', direction: 'replaced' }] }, [])
    expect(p).toContain('Part a is listed 2 times')
    expect(p).toContain('Part a would stand in for itself')
    const q = checkGroup({ ...ok, members: [{ partId: 'a', direction: 'both' }, { partId: 'a', direction: 'both' }] }, [])
    expect(q).toEqual(['A group needs at least two different parts', 'Part a is listed 2 times', 'Part a would stand in for itself',
      'No member can stand in for another: mark at least one part "both" or "replaces" and another "both" or "replaced"'])
  })

  it('no member able to replace another', () => {
    const g: SwapGroup = { ...ok, members: [{ partId: 'a', direction: 'replaces' }, { partId: 'b', direction: 'replaces' }] }
    expect(checkGroup(g, [])).toEqual(['No member can stand in for another: mark at least one part "both" or "replaces" and another "both" or "replaced"'])
  })

  it('a missing name and an unknown direction', () => {
    const g = { ...ok, name: ' ', members: [{ partId: 'a', direction: 'sideways' }, { partId: 'b', direction: 'both' }] } as unknown as SwapGroup
    expect(checkGroup(g, [])).toEqual(['The group needs a name', 'Part a has an unknown direction "sideways"',
      'No member can stand in for another: mark at least one part "both" or "replaces" and another "both" or "replaced"'])
  })

  it('contradiction: a replaces b one way in one group, b replaces a one way in another', () => {
    const old: SwapGroup = { id: 'g1', name: 'Old', members: [{ partId: 'a', direction: 'replaces' }, { partId: 'b', direction: 'replaced' }] }
    const neu: SwapGroup = { id: 'g2', name: 'New', members: [{ partId: 'b', direction: 'replaces' }, { partId: 'a', direction: 'replaced' }] }
    expect(checkGroup(neu, [old])).toEqual(['Contradicts group "Old": there only a stands in for b, here b may stand in for a'])
  })

  it('contradiction: another group already says b may not stand in for a', () => {
    const old: SwapGroup = { id: 'g1', name: 'Old', members: [{ partId: 'a', direction: 'replaces' }, { partId: 'b', direction: 'replaced' }] }
    expect(checkGroup({ ...ok, id: 'g2' }, [old])).toEqual(['Contradicts group "Old": there only a stands in for b, here b may stand in for a'])
    // …and the other way round: the new one-way group contradicts an existing two-way group.
    expect(checkGroup(old, [{ ...ok, id: 'g2', name: 'Both' }])).toEqual(['Contradicts group "Both": there b may stand in for a, here only a stands in for b'])
  })

  it('the same one-way statement twice is not a contradiction', () => {
    const g1: SwapGroup = { id: 'g1', name: 'One', members: [{ partId: 'a', direction: 'replaces' }, { partId: 'b', direction: 'replaced' }] }
    expect(checkGroup({ ...g1, id: 'g2', name: 'Two' }, [g1])).toEqual([])
  })
})
