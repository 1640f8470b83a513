import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import Papa from 'papaparse'
import { neutraliseCell, toCsv } from '../../shared/utils/spreadsheet'

describe('neutraliseCell (OWASP "CSV Injection")', () => {
  it('OWASP: cells starting with = + - @ are prefixed with a single quote', () => {
    expect(neutraliseCell('=SUM(A1:A2)')).toBe('\'=SUM(A1:A2)')
    expect(neutraliseCell('+44 1234')).toBe('\'+44 1234')
    expect(neutraliseCell('-5')).toBe('\'-5')
    expect(neutraliseCell('@mention')).toBe('\'@mention')
  })

  it('OWASP: cells starting with tab (0x09) or carriage return (0x0D) are prefixed; line feed too', () => {
    expect(neutraliseCell('\t=1')).toBe('\'\t=1')
    expect(neutraliseCell('\r=1')).toBe('\'\r=1')
    expect(neutraliseCell('\n=1')).toBe('\'\n=1')
  })

  it('other text is left alone, including those characters later in the cell', () => {
    for (const s of ['', '10k', 'R1-R4', 'a=b', 'kit@club', ' =1', '\'=already']) expect(neutraliseCell(s)).toBe(s)
  })
})

describe('toCsv (RFC 4180, OWASP)', () => {
  it('RFC 4180 2.1: each record ends with CRLF', () => {
    expect(toCsv([['a', 'b'], ['c', 'd']])).toBe('a,b\r\nc,d\r\n')
    expect(toCsv([])).toBe('')
  })

  it('RFC 4180 2.6: fields with commas, quotes or line breaks are quoted', () => {
    expect(toCsv([['R1, R2', 'line\nbreak', 'cr\rhere', 'plain']])).toBe('"R1, R2","line\nbreak","cr\rhere",plain\r\n')
  })

  it('RFC 4180 2.7: a quote inside a field is doubled', () => {
    expect(toCsv([['3.5" floppy']])).toBe('"3.5"" floppy"\r\n')
  })

  it('numbers stay numbers, a negative number too; text "-5" is neutralised', () => {
    expect(toCsv([[-5, '-5', 0, 12.5]])).toBe('-5,\'-5,0,12.5\r\n')
  })

  it('null and undefined are empty fields', () => {
    expect(toCsv([[null, 'x', undefined]])).toBe(',x,\r\n')
  })

  it('OWASP: formula text is neutralised, then quoted when RFC 4180 needs it', () => {
    expect(toCsv([['=HYPERLINK("http://x","y")']])).toBe('"\'=HYPERLINK(""http://x"",""y"")"\r\n')
  })

  it('a number that is not finite is refused', () => {
    expect(() => toCsv([[Number.NaN]])).toThrow('A CSV cell cannot hold NaN.')
    expect(() => toCsv([[Number.POSITIVE_INFINITY]])).toThrow(/Infinity/)
  })

  it('papaparse (an independent RFC 4180 reader) reads back the neutralised cells (property)', () => {
    const cell = fc.oneof(
      fc.string({ unit: fc.constantFrom('a', 'b', ',', '"', '\r', '\n', '\r\n', ' ', '=', '-', '+', '@', '\t', 'é') }),
      fc.string(),
    )
    const rows = fc.array(fc.array(cell, { minLength: 2, maxLength: 5 }), { minLength: 1, maxLength: 6 })
    fc.assert(fc.property(rows, (rs) => {
      // The final CRLF ends the last record; papaparse would read it as one more empty row.
      const csv = toCsv(rs).slice(0, -2)
      const parsed = Papa.parse<string[]>(csv, { delimiter: ',', newline: '\r\n', quoteChar: '"' })
      expect(parsed.errors).toEqual([])
      expect(parsed.data).toEqual(rs.map(r => r.map(neutraliseCell)))
    }), { numRuns: 300 })
  })
})
