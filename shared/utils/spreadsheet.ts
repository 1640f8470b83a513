// Spreadsheet export that is safe to open: text cells that a spreadsheet would run as a
// formula are neutralised (OWASP "CSV Injection"), and CSV follows RFC 4180.

// OWASP "CSV Injection": = + - @ tab and carriage return start a formula; line feed is added
// because some spreadsheets drop a leading line break and then read what follows.
const FORMULA_START = new Set(['=', '+', '-', '@', '\t', '\r', '\n'])

/** Prefixes a single quote to text that a spreadsheet would read as a formula. */
export function neutraliseCell(value: string): string {
  return value.length > 0 && FORMULA_START.has(value[0]!) ? `'${value}` : value
}

export type CsvCell = string | number | null | undefined

function csvField(cell: CsvCell): string {
  if (cell === null || cell === undefined) return ''
  if (typeof cell === 'number') {
    // A number is written as a number (a negative one too); only text can carry a formula.
    if (!Number.isFinite(cell)) throw new Error(`A CSV cell cannot hold ${cell}.`)
    return String(cell)
  }
  const text = neutraliseCell(String(cell))
  // RFC 4180 2.6 and 2.7: quote fields holding quotes, commas or line breaks; double inner quotes.
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text
}

/** CSV text per RFC 4180: CRLF after every record, quoted where needed, text cells neutralised. */
export function toCsv(rows: CsvCell[][]): string {
  return rows.map(row => `${row.map(csvField).join(',')}\r\n`).join('')
}
