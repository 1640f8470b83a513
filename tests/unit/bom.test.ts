import { describe, expect, it } from 'vitest'
import { diffRevisions, effectiveBom, validateChoice, type BomLine, type OptionGroup } from '../../shared/utils/bom'

// Invented kit: a small direct-conversion CW receiver with a band choice, an optional
// crystal filter and an optional "headphones only" build. Expected results are worked by
// hand from the rules at the top of shared/utils/bom.ts (Kitwright's own rules; the idea of
// a line per set of designators is common BOM practice).

const line = (id: string, designators: string, qty: number, partId: string | null, stage: string, stageOrder: number, extra: Partial<BomLine> = {}): BomLine =>
  ({ id, designators, qty, partId, stage, stageOrder, optionId: null, ...extra })

const base: BomLine[] = [
  line('b-res', 'R1-R4, R10', 5, 'res-10k', 'Audio', 3),
  line('b-dec', 'C1-C3', 3, 'cap-100n', 'Power', 1),
  line('b-mix', 'U1', 1, 'ic-mixer', 'Mixer', 2, { noStandIns: true }),
  line('b-amp', 'U2', 1, 'ic-audio-amp', 'Audio', 3),
  line('b-cpl', 'C20', 1, 'cap-10n', 'Mixer', 2),
  line('b-reg', 'U3', 1, 'reg-78l08', 'Power', 1),
  line('b-scr', '', 4, 'screw-m3x6', 'Case', 4),
  line('b-jack', 'J1', 1, 'jack-3.5', 'Case', 4),
]

const options: BomLine[] = [
  line('o40-L', 'L1', 1, 'coil-40m', 'Mixer', 2, { optionId: 'band-40' }),
  line('o40-C', 'C10, C11', 2, 'cap-150p', 'Mixer', 2, { optionId: 'band-40' }),
  line('o20-L', 'L1', 1, 'coil-20m', 'Mixer', 2, { optionId: 'band-20' }),
  line('o20-C', 'C10, C11', 2, 'cap-47p', 'Mixer', 2, { optionId: 'band-20' }),
  line('oxf', 'X1-X3', 3, 'xtal-7030', 'Mixer', 2, { optionId: 'filter-xtal', replacesLineId: 'b-cpl' }),
  line('ohp', 'U2', 0, null, 'Audio', 3, { optionId: 'headphones', removesLineId: 'b-amp' }),
]

const groups: OptionGroup[] = [
  { id: 'g-band', name: 'Band', rule: 'one', options: [{ id: 'band-40', name: '40 m' }, { id: 'band-20', name: '20 m' }] },
  { id: 'g-filter', name: 'Filter', rule: 'zero-or-one', options: [{ id: 'filter-xtal', name: 'Crystal filter' }] },
  { id: 'g-audio', name: 'Audio', rule: 'zero-or-one', options: [{ id: 'headphones', name: 'Headphones only' }, { id: 'speaker', name: 'Speaker amp' }] },
]

const lines = [...base, ...options]
const ids = (ls: BomLine[]) => ls.map(l => l.id)

describe('validateChoice', () => {
  it('a valid choice has no problems', () => {
    expect(validateChoice(groups, ['band-40'])).toEqual([])
    expect(validateChoice(groups, ['band-20', 'filter-xtal', 'headphones'])).toEqual([])
  })

  it('a "one" group needs a choice', () => {
    expect(validateChoice(groups, [])).toEqual(['Choose one option from "Band".'])
  })

  it('a "one" group takes no more than one', () => {
    expect(validateChoice(groups, ['band-40', 'band-20'])).toEqual(['Choose only one option from "Band" (chosen: "40 m" and "20 m").'])
  })

  it('a "zero-or-one" group takes no more than one', () => {
    expect(validateChoice(groups, ['band-40', 'headphones', 'speaker'])).toEqual(['Choose only one option from "Audio" (chosen: "Headphones only" and "Speaker amp").'])
  })

  it('an unknown option id is reported', () => {
    expect(validateChoice(groups, ['band-40', 'band-80'])).toEqual(['Unknown option "band-80".'])
  })

  it('the same option twice is reported', () => {
    expect(validateChoice(groups, ['band-40', 'band-40'])).toEqual(['Option "band-40" is chosen twice.'])
  })
})

describe('effectiveBom', () => {
  it('an invalid choice is refused with the problems in the message', () => {
    expect(() => effectiveBom(lines, groups, [])).toThrow('Choose one option from "Band".')
  })

  it('base lines plus the chosen band, ordered by stage order then first designator', () => {
    expect(ids(effectiveBom(lines, groups, ['band-40']))).toEqual([
      'b-dec', 'b-reg', // Power: C1 before U3
      'o40-C', 'b-cpl', 'o40-L', 'b-mix', // Mixer: C10 before C20 (numeric), then L1, U1
      'b-res', 'b-amp', // Audio: R1 before U2
      'b-jack', 'b-scr', // Case: lines without designators come last in their stage
    ])
  })

  it('the other band brings its own lines and not the first band\'s', () => {
    const bom = effectiveBom(lines, groups, ['band-20'])
    expect(ids(bom)).toContain('o20-L')
    expect(ids(bom)).not.toContain('o40-L')
  })

  it('a replacing line takes the place of its base line', () => {
    const bom = ids(effectiveBom(lines, groups, ['band-40', 'filter-xtal']))
    expect(bom).not.toContain('b-cpl')
    expect(bom).toContain('oxf')
  })

  it('a removing line with qty 0 takes its base line out and is not itself packed', () => {
    const bom = ids(effectiveBom(lines, groups, ['band-40', 'headphones']))
    expect(bom).not.toContain('b-amp')
    expect(bom).not.toContain('ohp')
    expect(bom).toHaveLength(9)
  })

  it('lines without a stage order come after those with one', () => {
    const extra = line('b-led', 'D1', 1, 'led-red', 'Indicator', 0, { stageOrder: undefined })
    const bom = ids(effectiveBom([extra, ...lines], groups, ['band-40']))
    expect(bom.at(-1)).toBe('b-led')
  })

  it('two chosen options may not replace the same base line', () => {
    const clash = line('sp', 'C20', 1, 'cap-22n', 'Mixer', 2, { optionId: 'speaker', replacesLineId: 'b-cpl' })
    expect(() => effectiveBom([...lines, clash], groups, ['band-40', 'filter-xtal', 'speaker']))
      .toThrow('Options "filter-xtal" and "speaker" both replace or remove line b-cpl.')
  })

  it('replacing a line that is not a base line is refused', () => {
    const bad = line('sp', 'C21', 1, 'cap-22n', 'Mixer', 2, { optionId: 'speaker', replacesLineId: 'o40-C' })
    expect(() => effectiveBom([...lines, bad], groups, ['band-40', 'speaker'])).toThrow(/not a base line/)
  })

  it('a line with malformed designators is named in the error', () => {
    const bad = line('b-bad', 'R5-R2', 2, 'res-1k', 'Audio', 3)
    expect(() => effectiveBom([...lines, bad], groups, ['band-40'])).toThrow(/Line b-bad: "R5-R2" is reversed/)
  })
})

describe('diffRevisions', () => {
  it('identical revisions: everything unchanged', () => {
    const d = diffRevisions(base, base.map(l => ({ ...l })))
    expect(d).toEqual({ added: [], removed: [], changed: [], unchanged: base.length })
  })

  it('a changed quantity and part on the same designators', () => {
    const b = base.map(l => (l.id === 'b-dec' ? { ...l, id: 'n-dec', qty: 4, designators: 'C1-C4' } : l.id === 'b-reg' ? { ...l, partId: 'reg-78l05' } : l))
    const d = diffRevisions(base, b)
    expect(d.changed.map(c => [c.before.id, c.after.id, c.fields])).toEqual([
      ['b-dec', 'n-dec', ['qty', 'designators']],
      ['b-reg', 'b-reg', ['part']],
    ])
    expect(d.unchanged).toBe(base.length - 2)
  })

  it('a designator moving between lines shows as changed designators on both', () => {
    const a = [line('a1', 'R1-R4', 4, 'res-10k', 'Audio', 3), line('a2', 'R5', 1, 'res-1k', 'Audio', 3)]
    const b = [line('b1', 'R1-R3', 3, 'res-10k', 'Audio', 3), line('b2', 'R4, R5', 2, 'res-1k', 'Audio', 3)]
    const d = diffRevisions(a, b)
    expect(d.changed.map(c => [c.before.id, c.after.id, c.fields])).toEqual([
      ['a1', 'b1', ['qty', 'designators']],
      ['a2', 'b2', ['qty', 'designators']],
    ])
    expect(d.added).toEqual([])
    expect(d.removed).toEqual([])
  })

  it('a split line keeps the larger share and the rest is added', () => {
    const a = [line('a1', 'C1-C5', 5, 'cap-100n', 'Power', 1)]
    const b = [line('b1', 'C1-C2', 2, 'cap-100n', 'Power', 1), line('b2', 'C3-C5', 3, 'cap-1u', 'Power', 1)]
    const d = diffRevisions(a, b)
    expect(d.changed.map(c => [c.before.id, c.after.id])).toEqual([['a1', 'b2']])
    expect(ids(d.added)).toEqual(['b1'])
  })

  it('added and removed lines, sorted by first designator (R2 before R10)', () => {
    const a = [line('r10', 'R10', 1, 'res-1k', 'Audio', 3), line('q1', 'Q1', 1, 'npn', 'Audio', 3), line('r2', 'R2', 1, 'res-1k', 'Audio', 3)]
    const b = [line('c9', 'C9', 1, 'cap-1u', 'Audio', 3), line('d1', 'D1', 1, 'led', 'Power', 1)]
    const d = diffRevisions(a, b)
    expect(ids(d.removed)).toEqual(['q1', 'r2', 'r10'])
    expect(ids(d.added)).toEqual(['c9', 'd1'])
  })

  it('lines without designators match by part and stage', () => {
    const b = base.map(l => (l.id === 'b-scr' ? { ...l, id: 'n-scr', qty: 6, notes: 'two spare' } : l))
    const d = diffRevisions(base, b)
    expect(d.changed.map(c => [c.before.id, c.after.id, c.fields])).toEqual([['b-scr', 'n-scr', ['qty', 'notes']]])
  })

  it('lines without designators and no part match by value text', () => {
    const a = [line('w1', '', 1, null, 'Case', 4, { valueText: 'Hook-up wire 1 m' })]
    const b = [line('w2', '', 2, null, 'Case', 4, { valueText: 'hook-up wire 1 m' })]
    expect(diffRevisions(a, b).changed.map(c => c.fields)).toEqual([['qty', 'part']])
  })

  it('hardware moved to another stage shows as removed and added', () => {
    const b = base.map(l => (l.id === 'b-scr' ? { ...l, stage: 'Power' } : l))
    const d = diffRevisions(base, b)
    expect(ids(d.removed)).toEqual(['b-scr'])
    expect(ids(d.added)).toEqual(['b-scr'])
  })

  it('stage, "no stand-ins" and notes changes are named; empty and missing notes are the same', () => {
    const a = [line('u1', 'U1', 1, 'ic-mixer', 'Mixer', 2, { notes: null })]
    const b = [line('u1', 'U1', 1, 'ic-mixer', 'RF', 2, { noStandIns: true, notes: '' })]
    expect(diffRevisions(a, b).changed[0]!.fields).toEqual(['stage', 'noStandIns'])
  })

  it('an option line is not matched with a base line on the same designators', () => {
    const a = [line('b-c20', 'C20', 1, 'cap-10n', 'Mixer', 2)]
    const b = [line('b-c20', 'C20', 1, 'cap-10n', 'Mixer', 2), line('opt', 'C20', 1, 'cap-22n', 'Mixer', 2, { optionId: 'x' })]
    const d = diffRevisions(a, b)
    expect(d.unchanged).toBe(1)
    expect(ids(d.added)).toEqual(['opt'])
  })

  it('a scope function matches options by name across revisions', () => {
    const a = [line('o1', 'L1', 1, 'coil-40m', 'Mixer', 2, { optionId: 'old-40' })]
    const b = [line('o1', 'L1', 1, 'coil-40m', 'Mixer', 2, { optionId: 'new-40' })]
    expect(diffRevisions(a, b).unchanged).toBe(0)
    const names: Record<string, string> = { 'old-40': '40 m', 'new-40': '40 m' }
    expect(diffRevisions(a, b, { scopeOf: l => names[l.optionId ?? ''] ?? '' }).unchanged).toBe(1)
  })

  it('the output does not depend on the input order', () => {
    const b = base.map(l => ({ ...l, qty: l.qty + 1 }))
    const forward = diffRevisions(base, b)
    const backward = diffRevisions([...base].reverse(), [...b].reverse())
    expect(backward).toEqual(forward)
    expect(forward.changed.map(c => c.before.id)).toEqual(['b-dec', 'b-cpl', 'b-jack', 'b-res', 'b-mix', 'b-amp', 'b-reg', 'b-scr'])
  })
})
