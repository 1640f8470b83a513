// The pure half of BOM import: guess what each column holds, then read rows into checked
// import rows. Reading the file (CSV, XLSX) and turning value text into parts happen on the server.

import { compressDesignators, expandDesignators } from './designators'

export type ImportField = 'designators' | 'qty' | 'value' | 'package' | 'description' | 'mpn' | 'stage' | 'notes' | 'ignore'

export interface ImportRow {
  rowNumber: number
  designators: string[]
  designatorText: string
  qty: number | null
  valueText: string
  packageText: string
  description: string
  mpn: string
  stage: string
  notes: string
  errors: string[]
  warnings: string[]
}

export const IMPORT_FIELD_LABELS: Record<ImportField, string> = {
  designators: 'designators',
  qty: 'quantity',
  value: 'value',
  package: 'package',
  description: 'description',
  mpn: 'manufacturer part number',
  stage: 'stage',
  notes: 'notes',
  ignore: 'ignored',
}

// Header words seen in designers' BOM exports, after normalising (lower case, punctuation to spaces).
const EXACT: Record<Exclude<ImportField, 'ignore'>, string[]> = {
  designators: ['designator', 'designators', 'designation', 'reference', 'references', 'ref', 'refs', 'ref des', 'refdes', 'reference designator', 'reference designators', 'parts', 'part references'],
  qty: ['qty', 'quantity', 'count', 'qnty', 'quant', 'pcs'],
  value: ['value', 'values', 'val', 'comment'],
  package: ['footprint', 'package', 'case', 'case package', 'pcb footprint', 'housing'],
  description: ['description', 'desc', 'descr'],
  mpn: ['mpn', 'part number', 'mfr pn', 'mfr p n', 'mfr part number', 'mfg pn', 'mfg part number', 'manufacturer pn', 'manufacturer part number', 'manufacturer part', 'mfr no', 'pn', 'p n'],
  stage: ['stage', 'step', 'build stage', 'build step'],
  notes: ['notes', 'note', 'remarks', 'remark'],
}

// Looser rules for headers such as "Qty per kit" or "Designator (top side)".
const LOOSE: [RegExp, Exclude<ImportField, 'ignore'>][] = [
  [/^(qty|quantity)\b/, 'qty'],
  [/\bdesignators?\b|^ref/, 'designators'],
  [/\b(footprint|package)\b/, 'package'],
  [/\bdescription\b/, 'description'],
  [/\b(mpn|part number|part no)\b/, 'mpn'],
  [/\bnotes?\b/, 'notes'],
  [/^value\b/, 'value'],
  [/^(build )?(stage|step)\b/, 'stage'],
]

const normalise = (h: string) => h.toLowerCase().replace(/[^a-z0-9]+/g, ' ').trim()

/** Guesses each column's field from its header; each field goes to one column at most. */
export function guessColumns(headers: string[]): Record<number, ImportField> {
  const result: Record<number, ImportField> = {}
  const used = new Set<ImportField>()
  const names = headers.map(h => normalise(h ?? ''))
  names.forEach((_, i) => { result[i] = 'ignore' })
  const assign = (i: number, field: ImportField) => {
    if (result[i] !== 'ignore' || used.has(field)) return
    result[i] = field
    used.add(field)
  }
  names.forEach((name, i) => {
    const field = (Object.keys(EXACT) as (keyof typeof EXACT)[]).find(f => EXACT[f].includes(name))
    if (field) assign(i, field)
  })
  names.forEach((name, i) => {
    const rule = LOOSE.find(([re, field]) => re.test(name) && !used.has(field))
    if (rule) assign(i, rule[1])
  })
  return result
}

/** Spreadsheet column letters: 0 -> A, 25 -> Z, 26 -> AA. */
export function columnLetter(index: number): string {
  let s = ''
  for (let n = index + 1; n > 0; n = Math.floor((n - 1) / 26)) s = String.fromCharCode(65 + ((n - 1) % 26)) + s
  return s
}

/** Problems with a column mapping: a field on two columns, or neither designators nor quantity. */
export function checkImportMapping(mapping: Record<number, ImportField>): string[] {
  const problems: string[] = []
  const columnsOf = new Map<ImportField, number[]>()
  for (const [key, field] of Object.entries(mapping)) {
    if (field === 'ignore') continue
    columnsOf.set(field, [...(columnsOf.get(field) ?? []), Number(key)])
  }
  for (const [field, cols] of columnsOf) {
    if (cols.length > 1) problems.push(`More than one column is marked as ${IMPORT_FIELD_LABELS[field]} (columns ${cols.map(columnLetter).join(', ')}).`)
  }
  if (!columnsOf.has('designators') && !columnsOf.has('qty')) problems.push('Mark a column as designators or as quantity.')
  return problems
}

function parseQty(text: string): number | string {
  const m = /^(\d+)(\.0*)?$/.exec(text)
  const n = m ? Number(m[1]) : Number.NaN
  if (!Number.isSafeInteger(n)) return `Quantity "${text}" is not a whole number of 0 or more.`
  return n
}

function emptyRow(rowNumber: number): ImportRow {
  return { rowNumber, designators: [], designatorText: '', qty: null, valueText: '', packageText: '', description: '', mpn: '', stage: '', notes: '', errors: [], warnings: [] }
}

type Cells = Partial<Record<ImportField, string>>

function readCells(row: string[], mapping: Record<number, ImportField>, errors: string[]): Cells | null {
  const cells: Cells = {}
  let anything = false
  for (const [key, field] of Object.entries(mapping)) {
    if (field === 'ignore') continue
    const text = String(row[Number(key)] ?? '').trim()
    if (text === '') continue
    anything = true
    if (text.startsWith('=')) errors.push(`Column ${columnLetter(Number(key))} (${IMPORT_FIELD_LABELS[field]}): formula cells are not read.`)
    else cells[field] = text
  }
  return anything ? cells : null
}

function readDesignators(row: ImportRow, text: string): void {
  row.designatorText = text
  try {
    row.designators = expandDesignators(text)
  }
  catch (e) {
    row.errors.push(`Designators: ${(e as Error).message}.`)
  }
}

function readQuantity(row: ImportRow, text: string | undefined): void {
  const count = row.designators.length
  if (text !== undefined) {
    const qty = parseQty(text)
    if (typeof qty === 'string') row.errors.push(qty)
    else row.qty = qty
    if (typeof qty === 'number' && count > 0 && qty !== count) row.warnings.push(`Quantity ${qty} differs from the ${count} designators; the quantity ${qty} is kept.`)
  }
  else if (count > 0) {
    row.qty = count
    row.warnings.push(`No quantity: ${count} taken from the designators.`)
  }
  else if (row.designatorText === '' && row.errors.length === 0) {
    row.errors.push('No quantity and no designators.')
  }
}

function readRow(row: string[], mapping: Record<number, ImportField>, rowNumber: number): ImportRow | null {
  const out = emptyRow(rowNumber)
  const cells = readCells(row, mapping, out.errors)
  if (cells === null) return null
  if (cells.designators !== undefined) readDesignators(out, cells.designators)
  readQuantity(out, cells.qty)
  out.valueText = cells.value ?? ''
  out.packageText = cells.package ?? ''
  out.description = cells.description ?? ''
  out.mpn = cells.mpn ?? ''
  out.stage = cells.stage ?? ''
  out.notes = cells.notes ?? ''
  return out
}

function warnSharedDesignators(rows: ImportRow[]): void {
  const rowsOf = new Map<string, ImportRow[]>()
  for (const r of rows) for (const d of r.designators) rowsOf.set(d, [...(rowsOf.get(d) ?? []), r])
  for (const r of rows) {
    const sharedWith = new Map<number, string[]>()
    for (const d of r.designators) {
      for (const other of rowsOf.get(d)!) {
        if (other !== r) sharedWith.set(other.rowNumber, [...(sharedWith.get(other.rowNumber) ?? []), d])
      }
    }
    for (const [n, ds] of [...sharedWith].sort((x, y) => x[0] - y[0])) {
      r.warnings.push(`${compressDesignators(ds)} ${ds.length === 1 ? 'is' : 'are'} also on row ${n}.`)
    }
  }
}

export interface ReadRowsOptions {
  /** The spreadsheet row number of rows[0] (2 when the header was row 1). Default 1. */
  firstRowNumber?: number
}

/**
 * Reads data rows with a column mapping. Blank rows are skipped; every other row comes back
 * with its errors (row not importable) and warnings (importable, but check it).
 * Throws when the mapping itself has problems (see checkImportMapping).
 */
export function readRows(rows: string[][], mapping: Record<number, ImportField>, options: ReadRowsOptions = {}): ImportRow[] {
  const problems = checkImportMapping(mapping)
  if (problems.length > 0) throw new Error(problems.join(' '))
  const first = options.firstRowNumber ?? 1
  const out: ImportRow[] = []
  rows.forEach((row, i) => {
    const read = readRow(row, mapping, first + i)
    if (read) out.push(read)
  })
  warnSharedDesignators(out)
  return out
}
