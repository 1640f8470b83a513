import { describe, expect, it } from 'vitest'
import { checkImportMapping, columnLetter, guessColumns, readRows, type ImportField } from '../../shared/utils/bom-import'

// Header words are the ones commonly seen in designers' BOM exports (common practice, from
// memory). Row checks follow the rules written at the top of each function in bom-import.ts;
// the rows are an invented CW receiver's BOM.

describe('guessColumns', () => {
  it('reads the usual header words', () => {
    expect(guessColumns(['Designator', 'Qty', 'Comment', 'Footprint', 'Description', 'Mfr. Part Number', 'Stage', 'Notes'])).toEqual({
      0: 'designators', 1: 'qty', 2: 'value', 3: 'package', 4: 'description', 5: 'mpn', 6: 'stage', 7: 'notes',
    })
  })

  it('reads other spellings, in any case and with punctuation', () => {
    expect(guessColumns(['REFERENCE', 'quantity', 'Val', 'Case/Package', 'Desc.', 'MPN', 'Step', 'Note'])).toEqual({
      0: 'designators', 1: 'qty', 2: 'value', 3: 'package', 4: 'description', 5: 'mpn', 6: 'stage', 7: 'notes',
    })
    expect(guessColumns(['Parts', 'Count', 'Part Number', 'Mfr PN'])).toEqual({ 0: 'designators', 1: 'qty', 2: 'mpn', 3: 'ignore' })
    expect(guessColumns(['RefDes', 'Ref Des'])).toEqual({ 0: 'designators', 1: 'ignore' })
  })

  it('reads longer headers by their leading word', () => {
    expect(guessColumns(['Quantity per kit', 'Designator (top)', 'PCB footprint name', 'Build stage'])).toEqual({
      0: 'qty', 1: 'designators', 2: 'package', 3: 'stage',
    })
  })

  it('an exact header wins over a loose one, and each field is used once', () => {
    expect(guessColumns(['Qty per board', 'Qty'])).toEqual({ 0: 'ignore', 1: 'qty' })
    expect(guessColumns(['Value', 'Value', 'Supplier', ''])).toEqual({ 0: 'value', 1: 'ignore', 2: 'ignore', 3: 'ignore' })
  })
})

describe('checkImportMapping', () => {
  it('a field on two columns is a problem, named by column letters', () => {
    expect(checkImportMapping({ 0: 'designators', 1: 'qty', 3: 'qty' })).toEqual(['More than one column is marked as quantity (columns B, D).'])
  })

  it('a mapping needs designators or quantity', () => {
    expect(checkImportMapping({ 0: 'value', 1: 'ignore' })).toEqual(['Mark a column as designators or as quantity.'])
    expect(checkImportMapping({ 0: 'qty' })).toEqual([])
  })

  it('column letters go A..Z, AA (spreadsheet convention)', () => {
    expect([0, 25, 26, 27, 701, 702].map(columnLetter)).toEqual(['A', 'Z', 'AA', 'AB', 'ZZ', 'AAA'])
  })
})

const mapping: Record<number, ImportField> = { 0: 'designators', 1: 'qty', 2: 'value', 3: 'package', 4: 'stage', 5: 'notes', 6: 'ignore' }

describe('readRows', () => {
  it('reads a clean row, with row numbers counted from the first data row', () => {
    const rows = readRows([['R1-R4', '4', '10k', '0805', 'Audio', '', 'x']], mapping, { firstRowNumber: 2 })
    expect(rows).toEqual([{
      rowNumber: 2, designators: ['R1', 'R2', 'R3', 'R4'], designatorText: 'R1-R4', qty: 4, valueText: '10k',
      packageText: '0805', description: '', mpn: '', stage: 'Audio', notes: '', errors: [], warnings: [],
    }])
  })

  it('an empty row is skipped, not an error (also when only ignored columns hold text)', () => {
    const rows = readRows([['C1', '1', '100n'], [], ['', ' ', ''], ['', '', '', '', '', '', 'subtotal'], ['C2', '1', '100n']], mapping)
    expect(rows.map(r => r.rowNumber)).toEqual([1, 5])
    expect(rows.flatMap(r => r.errors)).toEqual([])
  })

  it('an unreadable quantity is an error', () => {
    for (const q of ['two', '2.5', '-1', '1e3']) {
      const [row] = readRows([['', q, 'M3 screw']], mapping)
      expect(row!.errors).toEqual([`Quantity "${q}" is not a whole number of 0 or more.`])
      expect(row!.qty).toBeNull()
    }
    expect(readRows([['', '4.0', 'M3 screw']], mapping)[0]!.qty).toBe(4)
  })

  it('bad designators are an error carrying the designator message', () => {
    const [row] = readRows([['R4-R1', '4', '10k']], mapping)
    expect(row!.errors).toEqual(['Designators: "R4-R1" is reversed: write R1-R4.'])
    expect(row!.designators).toEqual([])
    expect(row!.designatorText).toBe('R4-R1')
  })

  it('a quantity that differs from the designator count is kept, with a warning', () => {
    const [row] = readRows([['C1-C3', '4', '100n']], mapping)
    expect(row!.qty).toBe(4)
    expect(row!.warnings).toEqual(['Quantity 4 differs from the 3 designators; the quantity 4 is kept.'])
  })

  it('a missing quantity is taken from the designators, with a warning', () => {
    const [row] = readRows([['D1, D2', '', '1N4148']], mapping)
    expect(row!.qty).toBe(2)
    expect(row!.warnings).toEqual(['No quantity: 2 taken from the designators.'])
  })

  it('a row with neither quantity nor designators is an error', () => {
    expect(readRows([['', '', 'knob']], mapping)[0]!.errors).toEqual(['No quantity and no designators.'])
  })

  it('a row without designators but with a quantity is fine (hardware)', () => {
    const [row] = readRows([['', '4', 'M3 x 6 screw', '', 'Case']], mapping)
    expect(row!.errors).toEqual([])
    expect(row!.qty).toBe(4)
  })

  it('a designator on two lines warns on both rows', () => {
    const rows = readRows([['R1-R4', '4', '10k'], ['C1', '1', '100n'], ['R3, R4, R9', '3', '1k']], mapping, { firstRowNumber: 2 })
    expect(rows[0]!.warnings).toEqual(['R3, R4 are also on row 4.'])
    expect(rows[1]!.warnings).toEqual([])
    expect(rows[2]!.warnings).toEqual(['R3, R4 are also on row 2.'])
  })

  it('a formula cell is an error and its text is not read', () => {
    const [row] = readRows([['R1', '=1+1', '=HYPERLINK("x")']], mapping)
    expect(row!.errors).toEqual([
      'Column B (quantity): formula cells are not read.',
      'Column C (value): formula cells are not read.',
    ])
    expect(row!.valueText).toBe('')
    expect(row!.qty).toBe(1) // taken from the designator instead
  })

  it('cells are trimmed and short rows are read as blank cells', () => {
    const [row] = readRows([['  L1 ', ' 1 ']], mapping)
    expect(row!.designators).toEqual(['L1'])
    expect(row!.valueText).toBe('')
  })

  it('a mapping with problems is refused', () => {
    expect(() => readRows([['R1']], { 0: 'value' })).toThrow('Mark a column as designators or as quantity.')
  })
})
