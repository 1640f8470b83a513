import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import {
  compareDesignators,
  compressDesignators,
  designatorPrefix,
  expandDesignators,
  MAX_DESIGNATORS,
  parseDesignator,
} from '../../shared/utils/designators'

// Check values: reference designators are written as a letter prefix and a number, with
// ranges such as R1-R4 (common practice in BOMs and schematics). The rules tested here are
// Kitwright's own, as listed at the top of designators.ts.

describe('expandDesignators', () => {
  it('empty text gives an empty list', () => {
    expect(expandDesignators('')).toEqual([])
    expect(expandDesignators('  ,; ')).toEqual([])
  })

  it('a full range and a single item are read in the order written', () => {
    expect(expandDesignators('R1-R4, R7')).toEqual(['R1', 'R2', 'R3', 'R4', 'R7'])
  })

  it('a short range "R1-4" repeats the prefix', () => {
    expect(expandDesignators('R1-4')).toEqual(['R1', 'R2', 'R3', 'R4'])
  })

  it('commas, semicolons and spaces all separate items', () => {
    expect(expandDesignators('C1;C2 C3,C4\tC5\nC6')).toEqual(['C1', 'C2', 'C3', 'C4', 'C5', 'C6'])
  })

  it('spaces around the range dash are allowed', () => {
    expect(expandDesignators('D1 - D3')).toEqual(['D1', 'D2', 'D3'])
  })

  it('multi-letter prefixes are kept whole', () => {
    expect(expandDesignators('SW1, TP1-TP3')).toEqual(['SW1', 'TP1', 'TP2', 'TP3'])
  })

  it('lower case is read as upper case', () => {
    expect(expandDesignators('r1-r2, sw3')).toEqual(['R1', 'R2', 'SW3'])
  })

  it('leading zeros are dropped', () => {
    expect(expandDesignators('R07')).toEqual(['R7'])
  })

  it('a one-item range is allowed', () => {
    expect(expandDesignators('L5-L5')).toEqual(['L5'])
  })

  it('a reversed range is refused', () => {
    expect(() => expandDesignators('R4-R1')).toThrow(/reversed/)
  })

  it('a range across prefixes is refused', () => {
    expect(() => expandDesignators('R1-C4')).toThrow(/two prefixes/)
  })

  it('a duplicate is refused, also when hidden in a range', () => {
    expect(() => expandDesignators('R1, R1')).toThrow(/R1 appears more than once/)
    expect(() => expandDesignators('R1-R4, R3')).toThrow(/R3 appears more than once/)
    expect(() => expandDesignators('R1, R01')).toThrow(/more than once/)
  })

  it('a malformed item is refused with the item in the message', () => {
    expect(() => expandDesignators('R1, 12')).toThrow(/"12"/)
    expect(() => expandDesignators('R1-')).toThrow(/"R1-"/)
    expect(() => expandDesignators('U1A')).toThrow(/"U1A"/)
    expect(() => expandDesignators('R1-R2-R3')).toThrow(/R1-R2-R3/)
  })

  it('more than 10,000 items are refused, in one range or across several', () => {
    expect(expandDesignators(`R1-R${MAX_DESIGNATORS}`)).toHaveLength(MAX_DESIGNATORS)
    expect(() => expandDesignators(`R1-R${MAX_DESIGNATORS + 1}`)).toThrow(/more than 10000/)
    expect(() => expandDesignators(`R1-R${MAX_DESIGNATORS}, C1`)).toThrow(/more than 10000/)
    expect(() => expandDesignators('R1-R999999999999')).toThrow(/more than 10000/)
  })
})

describe('compressDesignators', () => {
  it('runs of three or more become a range', () => {
    expect(compressDesignators(['R1', 'R2', 'R3', 'R4', 'R7'])).toBe('R1-R4, R7')
  })

  it('a pair stays as two items', () => {
    expect(compressDesignators(['R1', 'R2'])).toBe('R1, R2')
    expect(compressDesignators(['C4', 'C5', 'C9', 'C10', 'C11'])).toBe('C4, C5, C9-C11')
  })

  it('sorts by prefix, then by number (R2 before R10)', () => {
    expect(compressDesignators(['R10', 'C1', 'R2', 'SW1', 'R1'])).toBe('C1, R1, R2, R10, SW1')
  })

  it('a run does not continue across prefixes', () => {
    expect(compressDesignators(['C1', 'C2', 'C3', 'CR4', 'CR5'])).toBe('C1-C3, CR4, CR5')
  })

  it('an empty list gives empty text', () => {
    expect(compressDesignators([])).toBe('')
  })

  it('a duplicate is refused', () => {
    expect(() => compressDesignators(['R1', 'R1'])).toThrow(/more than once/)
  })

  it('compress then expand gives the sorted list back (property)', () => {
    const designator = fc.tuple(fc.constantFrom('R', 'C', 'L', 'SW', 'TP'), fc.integer({ min: 1, max: 60 }))
      .map(([p, n]) => `${p}${n}`)
    fc.assert(fc.property(fc.uniqueArray(designator, { maxLength: 40 }), (list) => {
      const sorted = [...list].sort(compareDesignators)
      expect(expandDesignators(compressDesignators(list))).toEqual(sorted)
    }))
  })
})

describe('designatorPrefix and parseDesignator', () => {
  it('gives the letters', () => {
    expect(designatorPrefix('TP3')).toBe('TP')
    expect(designatorPrefix('sw12')).toBe('SW')
    expect(parseDesignator('Q07')).toEqual({ prefix: 'Q', number: 7 })
  })

  it('a malformed designator is refused', () => {
    expect(() => designatorPrefix('12')).toThrow(/not a designator/)
    expect(() => designatorPrefix('R1-R3')).toThrow(/not a designator/)
  })
})
