// The BOM workbook builders follow at the bench: one sheet for the whole BOM, one per stage in
// build order. Used for a revision (organiser) and for a bag (what was actually packed).
// Explicit imports (no Nuxt auto-imports): the benchmark and plain tests import this file.
import ExcelJS from 'exceljs'
import { neutraliseCell, toCsv, type CsvCell } from '../../shared/utils/spreadsheet'
import { encodeCapCode, encodeColourBands, formatValue, toLetterCode } from '../../shared/utils/values'

/** A value read three ways, so a builder can identify the part in hand. */
export interface WorkbookValue {
  /** "4.7 kΩ" */
  text: string
  /** IEC 60062 letter code: "4k7", "100n". */
  letterCode?: string | null
  /** Resistor colour bands ("yellow violet red gold") or capacitor code ("104"). */
  marking?: string | null
}

export interface WorkbookLine {
  /** Compressed designators ("R1-R3, R5"); '' for hardware without designators. */
  designators: string
  qty: number
  /** The stage name; a name not in `stages` (or '') goes to a last "No stage" sheet. */
  stage: string
  /** What to pick: the catalogue part's name, or the designer's value text. */
  part: string
  value?: WorkbookValue | null
  package?: string | null
  notes?: string | null
  noStandIns?: boolean
  /** Bag workbooks: what was actually packed when it differs ("Resistor 4.7 kΩ 1 % (stand-in)"). */
  packed?: string | null
  /** Bag workbooks: shown highlighted in its own column (e.g. a stand-in's pinout warning). */
  warning?: string | null
}

export interface BomWorkbookInput {
  /** First line of every sheet, e.g. "Wren 40 — bill of materials". */
  title: string
  /** Label/value pairs under the title: kit, revision, options, order, build day. */
  header: [label: string, value: string][]
  /** Stage names in build order: one sheet each, in this order. */
  stages: string[]
  lines: WorkbookLine[]
  /** A "Safety" block under the header on every sheet (bag workbooks). */
  cautions?: string[]
}

interface Column { key: keyof Row, header: string, width: number, max: number }
type Row = Record<'stage' | 'designators' | 'qty' | 'part' | 'value' | 'letterCode' | 'marking' | 'package' | 'noStandIns' | 'notes' | 'packed' | 'warning', string | number>

const COLUMNS: Column[] = [
  { key: 'stage', header: 'Stage', width: 14, max: 24 },
  { key: 'designators', header: 'Designators', width: 14, max: 40 },
  { key: 'qty', header: 'Qty', width: 6, max: 6 },
  { key: 'part', header: 'Part', width: 24, max: 44 },
  { key: 'value', header: 'Value', width: 10, max: 14 },
  { key: 'letterCode', header: 'Letter code', width: 11, max: 11 },
  { key: 'marking', header: 'Colour bands / code', width: 20, max: 32 },
  { key: 'package', header: 'Package', width: 12, max: 24 },
  { key: 'noStandIns', header: 'No stand-ins', width: 12, max: 12 },
  { key: 'notes', header: 'Notes', width: 20, max: 50 },
  { key: 'packed', header: 'Packed', width: 24, max: 44 },
  { key: 'warning', header: 'Warning', width: 28, max: 60 },
]

/** The column headers of a sheet, in order (the whole-BOM sheet has Stage; bag columns only when used). */
export function workbookColumns(input: BomWorkbookInput, withStage = true): string[] {
  return columnsFor(input, withStage).map(c => c.header)
}

function columnsFor(input: BomWorkbookInput, withStage: boolean): Column[] {
  const hasPacked = input.lines.some(l => l.packed)
  const hasWarning = input.lines.some(l => l.warning)
  return COLUMNS.filter(c => (c.key !== 'stage' || withStage) && (c.key !== 'packed' || hasPacked) && (c.key !== 'warning' || hasWarning))
}

function rowOf(l: WorkbookLine): Row {
  return {
    stage: l.stage,
    designators: l.designators,
    qty: l.qty,
    part: l.part,
    value: l.value?.text ?? '',
    letterCode: l.value?.letterCode ?? '',
    marking: l.value?.marking ?? '',
    package: l.package ?? '',
    noStandIns: l.noStandIns ? 'yes' : '',
    notes: l.notes ?? '',
    packed: l.packed ?? '',
    warning: l.warning ?? '',
  }
}

const NO_STAGE = 'No stage'

/** Lines per sheet: the whole BOM, then each stage in build order, then lines without a known stage. */
function sheetsOf(input: BomWorkbookInput): { name: string, lines: WorkbookLine[], withStage: boolean }[] {
  const known = new Set(input.stages)
  const sheets = [{ name: 'Whole BOM', lines: input.lines, withStage: true }]
  for (const s of input.stages) sheets.push({ name: s, lines: input.lines.filter(l => l.stage === s), withStage: false })
  const loose = input.lines.filter(l => !known.has(l.stage))
  if (loose.length > 0) sheets.push({ name: NO_STAGE, lines: loose, withStage: true })
  return sheets
}

/** Sheet names: at most 31 characters, none of []:*?/\ , unique ignoring case (the spreadsheet rules). */
function sheetName(wanted: string, index: number, used: Set<string>): string {
  const base = (wanted.replace(/[[\]:*?/\\]/g, ' ').replace(/^'+|'+$/g, '').trim() || `Stage ${index}`).slice(0, 28)
  let name = base
  for (let n = 2; used.has(name.toLowerCase()); n++) name = `${base.slice(0, 27 - String(n).length)} (${n})`
  used.add(name.toLowerCase())
  return name
}

const text = (v: string) => neutraliseCell(v)
const INK = 'FF1F3B4D'
const HEAD_FILL: ExcelJS.Fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFD6E4EB' } }
const WARN_FILL: ExcelJS.Fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFFDE9B8' } }
const CAUTION_FILL: ExcelJS.Fill = { type: 'pattern', pattern: 'solid', fgColor: { argb: 'FFFDEEED' } }

function writeHeader(ws: ExcelJS.Worksheet, input: BomWorkbookInput, sheetTitle: string): void {
  const title = ws.addRow([text(input.title)])
  title.font = { bold: true, size: 14, color: { argb: INK } }
  for (const [label, value] of [...input.header, ['Sheet', sheetTitle] as [string, string]]) {
    const r = ws.addRow([text(label), text(value)])
    r.getCell(1).font = { bold: true }
  }
  if (input.cautions?.length) {
    ws.addRow([])
    const head = ws.addRow(['Safety'])
    head.font = { bold: true, color: { argb: 'FF921F18' } }
    for (const c of input.cautions) {
      const r = ws.addRow([text(`• ${c}`)])
      r.getCell(1).fill = CAUTION_FILL
    }
  }
  ws.addRow([])
}

function writeTable(ws: ExcelJS.Worksheet, cols: Column[], lines: WorkbookLine[], widths: number[]): number {
  const head = ws.addRow(cols.map(c => c.header))
  head.font = { bold: true, color: { argb: INK } }
  head.eachCell((cell) => {
    cell.fill = HEAD_FILL
    cell.border = { bottom: { style: 'thin', color: { argb: INK } } }
  })
  const warningAt = cols.findIndex(c => c.key === 'warning') + 1
  for (const l of lines) {
    const row = rowOf(l)
    const values = cols.map(c => (typeof row[c.key] === 'number' ? row[c.key] : text(String(row[c.key]))))
    const r = ws.addRow(values)
    // Styling every cell is what makes big workbooks slow: wrap only the cells too long for their column.
    values.forEach((v, i) => {
      if (typeof v === 'string' && v.length > widths[i]!) r.getCell(i + 1).alignment = { vertical: 'top', wrapText: true }
    })
    if (warningAt > 0 && l.warning) {
      const cell = r.getCell(warningAt)
      cell.fill = WARN_FILL
      cell.font = { bold: true, color: { argb: 'FF8A5800' } }
    }
  }
  return head.number
}

/** Column widths in characters: at least the column's default, wide enough for its longest cell, at most its cap. */
function widthsFor(cols: Column[], lines: WorkbookLine[]): number[] {
  const rows = lines.map(rowOf)
  return cols.map(c => Math.min(c.max, Math.max(c.width, c.header.length + 2, ...rows.map(r => String(r[c.key]).length + 2))))
}

function addSheet(wb: ExcelJS.Workbook, name: string, input: BomWorkbookInput, lines: WorkbookLine[], withStage: boolean): void {
  const cols = columnsFor(input, withStage)
  const ws = wb.addWorksheet(name)
  writeHeader(ws, input, name)
  const widths = widthsFor(cols, lines)
  const headRow = writeTable(ws, cols, lines, widths)
  widths.forEach((w, i) => { ws.getColumn(i + 1).width = w })
  ws.views = [{ state: 'frozen', xSplit: 0, ySplit: headRow, topLeftCell: `A${headRow + 1}`, activeCell: `A${headRow + 1}` }]
  ws.autoFilter = { from: { row: headRow, column: 1 }, to: { row: headRow, column: cols.length } }
  ws.pageSetup = {
    paperSize: 9, orientation: 'landscape', fitToPage: true, fitToWidth: 1, fitToHeight: 0,
    printTitlesRow: `${headRow}:${headRow}`, margins: { left: 0.4, right: 0.4, top: 0.5, bottom: 0.5, header: 0.3, footer: 0.3 },
  }
  ws.headerFooter = { oddFooter: '&L&A&RPage &P of &N' }
}

/**
 * Builds the BOM workbook (.xlsx bytes): a "Whole BOM" sheet and one sheet per stage in build
 * order, each with a header (title, the `header` pairs, the sheet), an optional safety block, a
 * frozen and filterable column-header row, sized columns and fit-to-width landscape printing.
 * Every text cell is neutralised against formula injection (OWASP "CSV Injection").
 */
export async function buildBomWorkbook(input: BomWorkbookInput): Promise<Buffer> {
  const wb = new ExcelJS.Workbook()
  wb.creator = 'Kitwright'
  wb.created = new Date()
  const used = new Set<string>()
  sheetsOf(input).forEach((s, i) => addSheet(wb, sheetName(s.name, i, used), input, s.lines, s.withStage))
  // Fast deflate: the sheets are small and repetitive, and a BOM workbook is made on demand.
  return Buffer.from(await wb.xlsx.writeBuffer({ zip: { compression: 'DEFLATE', compressionOptions: { level: 1 } } } as ExcelJS.XlsxWriteOptions))
}

/** The whole-BOM sheet as CSV (RFC 4180, text cells neutralised): header lines, a blank line, then the table. */
export function workbookCsv(input: BomWorkbookInput): string {
  const cols = columnsFor(input, true)
  const rows: CsvCell[][] = [[input.title], ...input.header.map(([k, v]) => [k, v])]
  for (const c of input.cautions ?? []) rows.push(['Safety', c])
  rows.push([], cols.map(c => c.header))
  for (const l of input.lines) {
    const row = rowOf(l)
    rows.push(cols.map(c => row[c.key]))
  }
  return toCsv(rows)
}

function attempt<T>(f: () => T): T | null {
  try { return f() }
  catch { return null }
}

/** Colour bands as words, 4 bands when two digits hold the value, else 5 (IEC 60062). */
function bands(ohms: number, tolerancePct: number | null | undefined): string | null {
  const tol = tolerancePct ?? 5
  const b = attempt(() => encodeColourBands(ohms, tol, 4)) ?? attempt(() => encodeColourBands(ohms, tol, 5))
  return b ? b.join(' ') : null
}

export interface ValuedPart {
  kind: string
  value: number | null
  unit: string | null
  tolerancePct?: number | null
  mounting?: 'tht' | 'smd' | null
  dielectric?: string | null
}

/**
 * A catalogue part's value three ways: text, letter code, and the marking a builder sees on a
 * through-hole part (colour bands on a resistor, the three-digit code on a non-electrolytic
 * capacitor). Null for parts without a value.
 */
export function partValueWays(p: ValuedPart): WorkbookValue | null {
  if (p.value == null || !p.unit) return null
  const out: WorkbookValue = { text: formatValue(p.value, p.unit) }
  if (p.unit === 'Ω' || p.unit === 'F' || p.unit === 'H') out.letterCode = attempt(() => toLetterCode(p.value!, p.unit!))
  if (p.kind === 'resistor' && p.unit === 'Ω' && p.mounting !== 'smd') out.marking = bands(p.value, p.tolerancePct)
  const printed = p.dielectric === 'electrolytic' || p.dielectric === 'tantalum'
  if (p.kind === 'capacitor' && p.unit === 'F' && !printed) out.marking = attempt(() => encodeCapCode(p.value!))
  return out
}
