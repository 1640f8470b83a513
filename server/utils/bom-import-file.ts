// BOM import, the file half: read an uploaded CSV or XLSX into a table of text cells, and read
// each row's value text into a part description the catalogue can be searched with.
// Explicit imports (no Nuxt auto-imports): the benchmark and plain tests import this file.
import ExcelJS from 'exceljs'
import Papa from 'papaparse'
import { createError } from 'h3'
import { guessColumns, type ImportField, type ImportRow } from '../../shared/utils/bom-import'
import { designatorPrefix } from '../../shared/utils/designators'
import { decodeCapCode, formatValue, parseValue, sameValue, toLetterCode } from '../../shared/utils/values'

export const MAX_IMPORT_BYTES = 5 * 1024 * 1024
const MAX_ROWS = 5000
const MAX_COLUMNS = 60
const MAX_CELL = 1000
// An .xlsx is a zip: refuse archives that would unpack far beyond what a BOM needs.
const MAX_UNZIPPED = 60 * 1024 * 1024

export interface ImportTable {
  fileName: string
  format: 'csv' | 'xlsx'
  sheet: string | null
  headers: string[]
  rows: string[][]
  /** The spreadsheet row number of rows[0]. */
  firstRowNumber: number
  mapping: Record<number, ImportField>
}

function unreadable(message: string): never {
  throw createError({ statusCode: 422, statusMessage: 'Unreadable file', message })
}

/** 413 with a message the organiser can act on. */
export function importTooLarge(bytes: number): never {
  const mb = (n: number) => `${(n / 1024 / 1024).toFixed(1)} MB`
  throw createError({ statusCode: 413, statusMessage: 'File too large', message: `The file is ${mb(bytes)}; the limit is ${mb(MAX_IMPORT_BYTES)}. Remove unused sheets or columns, or save it as CSV.` })
}

type Sniffed = 'xlsx' | 'csv'

function sniff(data: Uint8Array, fileName: string): Sniffed {
  const b = data
  if (b[0] === 0x50 && b[1] === 0x4B && b[2] === 0x03 && b[3] === 0x04) return 'xlsx'
  if (b[0] === 0xD0 && b[1] === 0xCF && b[2] === 0x11 && b[3] === 0xE0) unreadable(`"${fileName}" is an old-style .xls workbook: save it as .xlsx or .csv and upload again.`)
  if (b[0] === 0x25 && b[1] === 0x50 && b[2] === 0x44 && b[3] === 0x46) unreadable(`"${fileName}" is a PDF: upload the BOM as .csv or .xlsx.`)
  const utf16 = (b[0] === 0xFF && b[1] === 0xFE) || (b[0] === 0xFE && b[1] === 0xFF)
  if (!utf16 && b.subarray(0, 8192).includes(0)) unreadable(`"${fileName}" is not a CSV or XLSX file (it holds binary data).`)
  return 'csv'
}

function decodeText(data: Uint8Array): string {
  if (data[0] === 0xFF && data[1] === 0xFE) return new TextDecoder('utf-16le').decode(data.subarray(2))
  if (data[0] === 0xFE && data[1] === 0xFF) return new TextDecoder('utf-16be').decode(data.subarray(2))
  try {
    return new TextDecoder('utf-8', { fatal: true, ignoreBOM: false }).decode(data)
  }
  catch {
    // Older design tools write Windows-1252; reading it so beats refusing the file.
    return new TextDecoder('windows-1252').decode(data)
  }
}

function cleanCell(value: unknown, where: () => string): string {
  const text = value == null ? '' : String(value).replace(/\s+/g, ' ').trim()
  if (text.length > MAX_CELL) unreadable(`${where()} holds ${text.length} characters; a BOM cell may hold at most ${MAX_CELL}.`)
  return text
}

function checkShape(rows: string[][], fileName: string) {
  if (rows.length === 0) unreadable(`"${fileName}" is empty: there is no row to read.`)
  if (rows.length > MAX_ROWS + 20) unreadable(`"${fileName}" has ${rows.length} rows; a BOM may have at most ${MAX_ROWS}.`)
  const widest = Math.max(...rows.map(r => r.length))
  if (widest > MAX_COLUMNS) unreadable(`"${fileName}" has ${widest} columns; a BOM may have at most ${MAX_COLUMNS}.`)
}

function readCsv(data: Uint8Array, fileName: string): string[][] {
  const text = decodeText(data).replace(/^\uFEFF/, '')
  if (text.trim() === '') unreadable(`"${fileName}" is empty: there is no row to read.`)
  const parsed = Papa.parse<string[]>(text, { skipEmptyLines: 'greedy', delimitersToGuess: [',', ';', '\t', '|'] })
  const broken = parsed.errors.find(e => e.type === 'Quotes')
  if (broken) unreadable(`"${fileName}" row ${(broken.row ?? 0) + 1}: ${broken.message.replace(/\.$/, '')} — a quoted field is not closed.`)
  return parsed.data.map((row, r) => row.map((cell, c) => cleanCell(cell, () => `Row ${r + 1}, column ${c + 1}`)))
}

/** Sums the uncompressed sizes in a zip's central directory (no unpacking). */
function unzippedSize(data: Uint8Array, fileName: string): number {
  const view = new DataView(data.buffer, data.byteOffset, data.byteLength)
  let eocd = -1
  for (let i = data.length - 22; i >= Math.max(0, data.length - 22 - 65535); i--) {
    if (view.getUint32(i, true) === 0x06054B50) { eocd = i; break }
  }
  if (eocd < 0) unreadable(`"${fileName}" is not a readable .xlsx file (the archive is damaged or cut short).`)
  const entries = view.getUint16(eocd + 10, true)
  let at = view.getUint32(eocd + 16, true)
  let total = 0
  for (let n = 0; n < entries; n++) {
    if (at + 46 > data.length || view.getUint32(at, true) !== 0x02014B50) unreadable(`"${fileName}" is not a readable .xlsx file (the archive is damaged).`)
    total += view.getUint32(at + 24, true)
    at += 46 + view.getUint16(at + 28, true) + view.getUint16(at + 30, true) + view.getUint16(at + 32, true)
  }
  return total
}

function xlsxCellText(cell: ExcelJS.Cell): string {
  const where = () => `Cell ${cell.address}`
  if (cell.type === ExcelJS.ValueType.Formula || (cell.value && typeof cell.value === 'object' && ('formula' in cell.value || 'sharedFormula' in cell.value))) {
    unreadable(`Cell ${cell.address} holds a formula; Kitwright does not run formulas. Replace formulas with their values (copy, paste values only) and upload again.`)
  }
  if (cell.type === ExcelJS.ValueType.Error) unreadable(`Cell ${cell.address} holds an error value (${cell.text}); fix or clear it and upload again.`)
  const v = cell.value
  if (v instanceof Date) return v.toISOString().slice(0, 10)
  if (v && typeof v === 'object') {
    if ('richText' in v) return cleanCell(v.richText.map(r => r.text).join(''), where)
    if ('text' in v) return cleanCell(String(v.text), where)
  }
  return cleanCell(v, where)
}

async function readXlsx(data: Uint8Array, fileName: string): Promise<{ rows: string[][], sheet: string }> {
  if (unzippedSize(data, fileName) > MAX_UNZIPPED) unreadable(`"${fileName}" unpacks to more than ${MAX_UNZIPPED / 1024 / 1024} MB; a BOM workbook is far smaller. Save the BOM sheet alone as .xlsx or .csv.`)
  const wb = new ExcelJS.Workbook()
  try {
    await wb.xlsx.load(Buffer.from(data.buffer, data.byteOffset, data.byteLength) as never)
  }
  catch {
    unreadable(`"${fileName}" is not a readable .xlsx workbook. Open it and save it again as .xlsx or .csv.`)
  }
  const sheet = wb.worksheets.find(ws => ws.actualRowCount > 0)
  if (!sheet) unreadable(`"${fileName}" is empty: no sheet holds any cell.`)
  if (sheet.rowCount > MAX_ROWS + 20) unreadable(`"${fileName}" has ${sheet.rowCount} rows; a BOM may have at most ${MAX_ROWS}.`)
  const rows: string[][] = []
  sheet.eachRow({ includeEmpty: false }, (row) => {
    const cells: string[] = []
    row.eachCell({ includeEmpty: false }, (cell, col) => {
      if (col > MAX_COLUMNS) unreadable(`"${fileName}" has more than ${MAX_COLUMNS} columns; a BOM may have at most ${MAX_COLUMNS}.`)
      cells[col - 1] = xlsxCellText(cell)
    })
    const dense = Array.from(cells, c => c ?? '')
    if (dense.some(c => c !== '')) rows.push(dense)
  })
  return { rows, sheet: sheet.name }
}

const mappedCount = (m: Record<number, ImportField>) => Object.values(m).filter(f => f !== 'ignore').length

/** The header row is the one, among the first ten, whose words name the most BOM fields. */
function findHeader(rows: string[][]): number {
  let best = 0
  let bestCount = -1
  rows.slice(0, 10).forEach((row, i) => {
    const n = mappedCount(guessColumns(row))
    if (n > bestCount) { best = i; bestCount = n }
  })
  return best
}

/**
 * Reads an uploaded BOM (CSV or XLSX, told apart by the file's bytes) into text cells with a
 * guessed column mapping. Throws 413 when too large and 422, with a message saying what to do,
 * when the file is empty, damaged, of another type, or holds formula or error cells.
 */
export async function readImportFile(fileName: string, data: Uint8Array): Promise<ImportTable> {
  if (data.length > MAX_IMPORT_BYTES) importTooLarge(data.length)
  if (data.length === 0) unreadable(`"${fileName}" is empty (0 bytes).`)
  const format = sniff(data, fileName)
  let rows: string[][]
  let sheet: string | null = null
  if (format === 'xlsx') ({ rows, sheet } = await readXlsx(data, fileName))
  else rows = readCsv(data, fileName)
  checkShape(rows, fileName)
  const h = findHeader(rows)
  const width = Math.max(...rows.map(r => r.length))
  const pad = (r: string[]) => Array.from({ length: width }, (_, i) => r[i] ?? '')
  const headers = pad(rows[h]!)
  const body = rows.slice(h + 1).map(pad)
  if (body.length === 0) unreadable(`"${fileName}" has a header row but no rows of parts under it.`)
  if (body.length > MAX_ROWS) unreadable(`"${fileName}" has ${body.length} rows of parts; a BOM may have at most ${MAX_ROWS}.`)
  // Blank rows were dropped, so row numbers are counted in the rows kept (the preview shows them).
  return { fileName, format, sheet, headers, rows: body, firstRowNumber: h + 2, mapping: guessColumns(headers) }
}

// ---- reading a row's value ----

export type ReadKind = 'resistor' | 'capacitor' | 'inductor' | 'crystal' | 'diode' | 'transistor' | 'ic' | 'connector' | 'hardware' | 'board' | 'other'

export interface ValueRead {
  kind: ReadKind
  value?: number
  unit?: string
  tolerancePct?: number
  powerW?: number
  voltageV?: number
  currentA?: number
  dielectric?: string
  /** How an unusual token was read, e.g. "104 read as a capacitor code". */
  note?: string
  /** Words kept as they are (part names, package words). */
  words: string[]
  /** Why a resistor or capacitor value could not be read (the row gets a warning). */
  problem?: string
  /** The reading in words: "resistor 4.7 kΩ, 0.25 W". */
  text: string
}

// Common practice for reference designator letters (IEEE 315 / IEC 81346 style, as kits use them).
const PREFIX_KIND: Record<string, ReadKind> = {
  R: 'resistor', RN: 'resistor', VR: 'resistor', RV: 'resistor', POT: 'resistor',
  C: 'capacitor', VC: 'capacitor', CV: 'capacitor',
  L: 'inductor', T: 'inductor', TR: 'inductor', FB: 'inductor',
  Y: 'crystal', XTAL: 'crystal', XT: 'crystal',
  D: 'diode', LED: 'diode', ZD: 'diode', DZ: 'diode',
  Q: 'transistor',
  U: 'ic', IC: 'ic',
  J: 'connector', P: 'connector', CN: 'connector', CON: 'connector', JP: 'connector',
  SW: 'hardware', S: 'hardware', H: 'hardware', MH: 'hardware', BT: 'hardware', LS: 'hardware', F: 'hardware', K: 'hardware',
  PCB: 'board',
}
const UNIT_KIND: Record<string, ReadKind> = { 'Ω': 'resistor', F: 'capacitor', H: 'inductor', Hz: 'crystal' }
const KIND_UNIT: Partial<Record<ReadKind, string>> = { resistor: 'Ω', capacitor: 'F', inductor: 'H', crystal: 'Hz' }
const DIELECTRICS: Record<string, string> = {
  C0G: 'C0G', COG: 'C0G', NP0: 'C0G', NPO: 'C0G', X7R: 'X7R', X5R: 'X5R', X7S: 'X7S', X6S: 'X6S', Y5V: 'Y5V', Z5U: 'Z5U',
  ELECTROLYTIC: 'electrolytic', ELKO: 'electrolytic', ELEC: 'electrolytic', ELECTRO: 'electrolytic', TANTALUM: 'tantalum', TANT: 'tantalum',
  FILM: 'film', POLYESTER: 'film', MKT: 'film', MYLAR: 'film', POLYPROPYLENE: 'film', MKP: 'film',
}

function kindOf(designators: string[], valueText: string): ReadKind {
  if (designators.length === 0) return 'other'
  const prefix = designatorPrefix(designators[0]!)
  if (prefix === 'X') return /hz/i.test(valueText) ? 'crystal' : 'connector'
  return PREFIX_KIND[prefix] ?? 'other'
}

// Cheap shape checks first: most words in a BOM are not values, and a thrown parse error is slow.
const MAY_BE_VALUE = /^(?:[\d.]|[RrpPnNuUmkKMGT]\d)/
const UNIT_WORD = /^(?:[pnuµmkKMG]?(?:Ω|ohms?|F|H|Hz|V|W|A)|[kKM]|%)$/i

function tryParse(t: string, kind?: string) {
  if (!MAY_BE_VALUE.test(t)) return null
  try { return parseValue(t, kind) }
  catch { return null }
}

function words(text: string): string[] {
  return text.replace(/±\s*/g, '').replace(/(\d)\s+%/g, '$1%').split(/[\s,;]+/).filter(Boolean)
}

interface Acc { read: ValueRead, mainUnit?: string }

/** One token (or two joined, "100 nF") as a tolerance, dielectric, rating or main value; false if not. */
function take(acc: Acc, t: string): boolean {
  const r = acc.read
  const pct = /^(\d+(?:\.\d+)?)%$/.exec(t)
  if (pct) { r.tolerancePct = Number(pct[1]); return true }
  const diel = DIELECTRICS[t.toUpperCase()]
  if (diel) { r.dielectric = diel; return true }
  if (acc.mainUnit === 'F' && r.value === undefined && /^\d{3}$/.test(t)) {
    r.value = decodeCapCode(t)
    r.unit = 'F'
    r.note = `${t} read as a capacitor code (${formatValue(r.value, 'F')})`
    return true
  }
  const plain = tryParse(t)
  if (plain && (plain.unit === 'W' || plain.unit === 'V' || plain.unit === 'A') && acc.mainUnit !== plain.unit) {
    if (plain.unit === 'W') r.powerW = plain.value
    if (plain.unit === 'V') r.voltageV = plain.value
    if (plain.unit === 'A') r.currentA = plain.value
    return true
  }
  if (r.value !== undefined || !acc.mainUnit) return false
  const main = tryParse(t, r.kind)
  if (!main) {
    if (plain?.unit) r.problem = `"${t}" is in ${plain.unit}, but a ${r.kind} is measured in ${acc.mainUnit}`
    return !!plain?.unit
  }
  // Only resistances are written as bare numbers; "22" on a capacitor could be pF or µF.
  if (acc.mainUnit !== 'Ω' && !/[a-zA-Zµ]/.test(t)) {
    if (acc.mainUnit === 'F') r.problem = `"${t}" has no unit: write 22p, 100n or 4u7 so the capacitance is clear`
    return acc.mainUnit === 'F'
  }
  r.value = main.value
  r.unit = main.unit || acc.mainUnit
  if (main.tolerance !== undefined && r.tolerancePct === undefined) r.tolerancePct = main.tolerance
  return true
}

function rating(n: number, unit: string): string {
  return n >= 1 || unit !== 'A' ? `${Number(n.toPrecision(3))} ${unit}` : formatValue(n, unit)
}

/** The reading in words, e.g. "resistor 4.7 kΩ, ±5 %, 0.25 W". */
export function describeValueRead(r: Omit<ValueRead, 'text'>): string {
  const bits = [r.value !== undefined && r.unit ? `${r.kind} ${formatValue(r.value, r.unit)}` : r.kind]
  if (r.tolerancePct !== undefined) bits.push(`±${r.tolerancePct} %`)
  if (r.powerW !== undefined) bits.push(rating(r.powerW, 'W'))
  if (r.voltageV !== undefined) bits.push(rating(r.voltageV, 'V'))
  if (r.currentA !== undefined) bits.push(rating(r.currentA, 'A'))
  if (r.dielectric) bits.push(r.dielectric)
  if (r.words.length) bits.push(`"${r.words.join(' ')}"`)
  return bits.join(', ')
}

/**
 * Reads a BOM row's value text the way designers write it (`4K7 1/4W`, `100n 50V X7R`, `104`,
 * `7.030 MHz`, `2N3904`) into a kind (from the designator letters, else the unit), a value and
 * ratings. A resistor or capacitor whose value cannot be read gets a `problem`, not an exception.
 */
export function readRowValue(designators: string[], valueText: string): ValueRead {
  let kind = kindOf(designators, valueText)
  const tokens = words(valueText)
  if (kind === 'other') {
    const guess = tokens.map(t => tryParse(t)).find(p => p && UNIT_KIND[p.unit])
    if (guess) kind = UNIT_KIND[guess.unit]!
  }
  const acc: Acc = { read: { kind, words: [], text: '' }, mainUnit: KIND_UNIT[kind] }
  for (let i = 0; i < tokens.length; i++) {
    const pair = i + 1 < tokens.length && UNIT_WORD.test(tokens[i + 1]!) && /^[\d.]/.test(tokens[i]!) ? `${tokens[i]}${tokens[i + 1]}` : null
    if (pair && take(acc, pair)) { i++; continue }
    if (!take(acc, tokens[i]!)) acc.read.words.push(tokens[i]!)
  }
  const r = acc.read
  if ((kind === 'resistor' || kind === 'capacitor') && r.value === undefined && !r.problem) {
    r.problem = valueText.trim() ? `"${valueText.trim()}" could not be read as a ${kind === 'resistor' ? 'resistance' : 'capacitance'}` : 'No value given'
  }
  r.text = describeValueRead(r)
  return r
}

// ---- matching a reading against the catalogue ----

export interface CataloguePart {
  id: number
  kind: string
  name: string
  value: number | null
  unit: string | null
  tolerancePct: number | null
  powerW: number | null
  voltageV: number | null
  currentA: number | null
  dielectric: string | null
  mounting: 'tht' | 'smd' | null
  package: string | null
  makerPartNumber: string | null
}

export type MatchStatus = 'existing' | 'new' | 'choice' | 'unresolved'

export interface NewPartDraft {
  kind: ReadKind
  name: string
  value: number | null
  unit: string | null
  valueText: string | null
  tolerancePct: number | null
  powerW: number | null
  voltageV: number | null
  currentA: number | null
  dielectric: string | null
  mounting: 'tht' | 'smd' | null
  polarised: boolean
  package: string | null
  makerPartNumber: string | null
  description: string | null
}

export interface RowMatch {
  status: MatchStatus
  partId: number | null
  candidates: { id: number, name: string }[]
  newPart: NewPartDraft | null
  why: string
}

export interface PreviewRow extends ImportRow {
  read: ValueRead
  match: RowMatch
}

/** The catalogue indexed for matching many rows (by kind, and by maker's part number and name). */
export function indexImportCatalogue(parts: CataloguePart[]) {
  const byKind = new Map<string, CataloguePart[]>()
  const byText = new Map<string, CataloguePart[]>()
  const add = (m: Map<string, CataloguePart[]>, k: string, p: CataloguePart) => m.set(k, [...(m.get(k) ?? []), p])
  for (const p of parts) {
    add(byKind, p.kind, p)
    add(byText, p.name.trim().toLowerCase(), p)
    if (p.makerPartNumber) add(byText, p.makerPartNumber.trim().toLowerCase(), p)
  }
  return { parts, byKind, byText }
}
export type ImportCatalogue = ReturnType<typeof indexImportCatalogue>

const SMD = /\b(0201|0402|0603|0805|1206|1210|1812|2010|2512|SOT-?\d*|SOD-?\d*|SOIC-?\d*|SMD|SMT|QFN-?\d*|TSSOP-?\d*|MSOP-?\d*|SMA|SMB|MELF)\b/i
const THT = /\b(axial|radial|DIP-?\d*|TO-?\d+|THT|DO-?\d+|HC-?49\S*|through[- ]hole|disc)\b/i

function mountingOf(pkg: string): 'tht' | 'smd' | null {
  return SMD.test(pkg) ? 'smd' : THT.test(pkg) ? 'tht' : null
}

function fits(p: CataloguePart, r: ValueRead): boolean {
  if (r.powerW !== undefined && (p.powerW == null || p.powerW < r.powerW * (1 - 1e-9))) return false
  if (r.voltageV !== undefined && (p.voltageV == null || p.voltageV < r.voltageV * (1 - 1e-9))) return false
  if (r.currentA !== undefined && (p.currentA == null || p.currentA < r.currentA * (1 - 1e-9))) return false
  if (r.tolerancePct !== undefined && (p.tolerancePct == null || p.tolerancePct > r.tolerancePct * (1 + 1e-9))) return false
  if (r.dielectric && (p.dielectric ?? '').toLowerCase() !== r.dielectric.toLowerCase()) return false
  return true
}

function byPackage(list: CataloguePart[], pkg: string): CataloguePart[] {
  const want = pkg.trim().toLowerCase()
  const mount = mountingOf(pkg)
  if (!want) return list
  const same = list.filter(p => (p.package ?? '').toLowerCase().includes(want) || (mount !== null && p.mounting === mount))
  return same.length > 0 ? same : list
}

function partName(r: ValueRead, row: ImportRow): string {
  const kindWord = r.kind[0]!.toUpperCase() + r.kind.slice(1)
  if (r.value !== undefined && r.unit) {
    const bits = [kindWord, formatValue(r.value, r.unit)]
    if (r.tolerancePct !== undefined) bits.push(`${r.tolerancePct} %`)
    if (r.dielectric) bits.push(r.dielectric)
    if (r.powerW !== undefined) bits.push(rating(r.powerW, 'W'))
    if (r.voltageV !== undefined) bits.push(rating(r.voltageV, 'V'))
    return bits.join(' ')
  }
  return (row.valueText || row.description || row.mpn || kindWord).slice(0, 160)
}

function letterOrNull(value: number, unit: string): string | null {
  try { return toLetterCode(value, unit) }
  catch { return null }
}

/** The part that would be created for a row, from its reading. */
export function newPartFrom(r: ValueRead, row: ImportRow): NewPartDraft {
  const hasValue = r.value !== undefined && !!r.unit
  return {
    kind: r.kind,
    name: partName(r, row),
    value: hasValue ? r.value! : null,
    unit: hasValue ? r.unit! : null,
    valueText: hasValue ? formatValue(r.value!, r.unit!) : null,
    tolerancePct: r.tolerancePct ?? null,
    powerW: r.powerW ?? null,
    voltageV: r.voltageV ?? null,
    currentA: r.currentA ?? null,
    dielectric: r.dielectric ?? null,
    mounting: mountingOf(`${row.packageText} ${row.description}`),
    polarised: r.kind === 'diode' || r.dielectric === 'electrolytic' || r.dielectric === 'tantalum',
    package: row.packageText ? row.packageText.slice(0, 64) : null,
    makerPartNumber: row.mpn ? row.mpn.slice(0, 64) : null,
    description: row.description || null,
  }
}

const pick = (list: CataloguePart[]) => list.map(p => ({ id: p.id, name: p.name }))

function outcome(list: CataloguePart[], r: ValueRead, row: ImportRow, how: string): RowMatch {
  if (list.length === 1) return { status: 'existing', partId: list[0]!.id, candidates: pick(list), newPart: null, why: `${how}: ${list[0]!.name}` }
  if (list.length > 1) return { status: 'choice', partId: null, candidates: pick(list), newPart: null, why: `${list.length} catalogue parts fit (${how})` }
  return { status: 'new', partId: null, candidates: [], newPart: newPartFrom(r, row), why: 'No catalogue part fits: a new part can be made from the reading' }
}

/** Which catalogue part a row's reading matches: one (existing), several (choice), none (new), or nothing to match on. */
export function matchImportRow(row: ImportRow, r: ValueRead, cat: ImportCatalogue): RowMatch {
  if (row.mpn) {
    const hits = (cat.byText.get(row.mpn.toLowerCase()) ?? []).filter(p => p.makerPartNumber?.toLowerCase() === row.mpn.toLowerCase())
    if (hits.length > 0) return outcome(hits, r, row, 'same maker\'s part number')
  }
  if (r.problem) return { status: 'unresolved', partId: null, candidates: [], newPart: null, why: `${r.problem}; the line keeps its value text until a part is chosen` }
  if (r.value !== undefined && r.unit) {
    const same = (cat.byKind.get(r.kind) ?? []).filter(p => p.value != null && sameValue(p.value, r.value!) && fits(p, r))
    return outcome(byPackage(same, row.packageText), r, row, 'same value and ratings')
  }
  const text = (row.valueText || row.description).trim().toLowerCase()
  if (!text) return { status: 'unresolved', partId: null, candidates: [], newPart: null, why: 'Nothing to match: the row has no value or description' }
  const exact = (cat.byText.get(text) ?? []).filter(p => r.kind === 'other' || p.kind === r.kind)
  if (exact.length > 0) return outcome(exact, r, row, 'same name')
  const pool = r.kind === 'other' ? cat.parts : cat.byKind.get(r.kind) ?? []
  const near = text.length >= 3 ? pool.filter(p => p.name.toLowerCase().includes(text) || p.makerPartNumber?.toLowerCase().includes(text)) : []
  if (near.length > 0) return { status: 'choice', partId: null, candidates: pick(near), newPart: newPartFrom(r, row), why: `Name contains "${text}": confirm the part or make a new one` }
  return outcome([], r, row, '')
}
