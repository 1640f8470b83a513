import { existsSync, readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { inflateSync } from 'node:zlib'
import PDFDocument from 'pdfkit'
import QRCode from 'qrcode'
import { SIG_LENGTH } from './codes'

/** A label stock: a page holding rows × cols labels. Sizes in millimetres. */
export interface SheetLayout {
  id: string
  name: string
  page: 'A4' | 'Letter' | { widthMm: number; heightMm: number }
  rows: number
  cols: number
  marginTopMm: number
  marginLeftMm: number
  gapXMm: number
  gapYMm: number
  /** Default: the page width less both side margins and the gaps, shared among the columns. */
  labelWidthMm?: number
  labelHeightMm?: number
}

/**
 * One label. `code` is what a person types when the QR will not scan: pass the signed token from
 * signCode() (e.g. `B7K3QX-9F2KD8A3`); its code part is printed large and the signature after it smaller.
 * `count` is the number of copies (default 1). `qrText` '' prints no QR code.
 */
export interface Label {
  qrText: string
  title: string
  code: string
  lines: string[]
  count?: number
  tone?: 'bag' | 'pouch' | 'bin'
}

export interface RenderOptions {
  /** Label positions already used on the first sheet (they are skipped). */
  startAt?: number
  /** Roboto regular and bold font files (WOFF/TTF); by default read from server/assets/fonts. */
  fonts?: { regular: Buffer; bold: Buffer }
}

const IN = 25.4
// Common label stocks (sizes as common practice); the ids are Kitwright's own.
export const SHEET_LAYOUTS: SheetLayout[] = [
  { id: 'a4-3x8', name: 'A4, 3 × 8 labels, 70 × 37 mm', page: 'A4', rows: 8, cols: 3, marginTopMm: 0.5, marginLeftMm: 0, gapXMm: 0, gapYMm: 0, labelWidthMm: 70, labelHeightMm: 37 },
  { id: 'a4-2x7', name: 'A4, 2 × 7 labels, 99.1 × 38.1 mm', page: 'A4', rows: 7, cols: 2, marginTopMm: 15.15, marginLeftMm: 4.65, gapXMm: 2.5, gapYMm: 0, labelWidthMm: 99.1, labelHeightMm: 38.1 },
  { id: 'letter-3x10', name: 'US Letter, 3 × 10 labels, 2.625 × 1 in', page: 'Letter', rows: 10, cols: 3, marginTopMm: 0.5 * IN, marginLeftMm: 0.1875 * IN, gapXMm: 0.125 * IN, gapYMm: 0, labelWidthMm: 2.625 * IN, labelHeightMm: 1 * IN },
  { id: 'letter-2x5', name: 'US Letter, 2 × 5 labels, 4 × 2 in', page: 'Letter', rows: 5, cols: 2, marginTopMm: 0.5 * IN, marginLeftMm: 0.15625 * IN, gapXMm: 0.1875 * IN, gapYMm: 0, labelWidthMm: 4 * IN, labelHeightMm: 2 * IN },
  { id: 'thermal-62x29', name: 'Label printer roll, 62 × 29 mm', page: { widthMm: 62, heightMm: 29 }, rows: 1, cols: 1, marginTopMm: 0, marginLeftMm: 0, gapXMm: 0, gapYMm: 0 },
  { id: 'thermal-50x30', name: 'Label printer roll, 50 × 30 mm', page: { widthMm: 50, heightMm: 30 }, rows: 1, cols: 1, marginTopMm: 0, marginLeftMm: 0, gapXMm: 0, gapYMm: 0 },
]

const PAGE_MM = { A4: { widthMm: 210, heightMm: 297 }, Letter: { widthMm: 8.5 * IN, heightMm: 11 * IN } }
const MIN_LABEL_MM = { width: 30, height: 20 }
const FIT_SLACK_MM = 0.05
const PT = 72 / IN
const EDGE_MM = 0.8
const QUIET_MODULES = 4
const ELLIPSIS = '…'
// Stand-ins for characters outside Roboto's latin subset that decomposition does not fold.
const FALLBACK: Record<string, string> = {
  '\u2126': 'ohm', '\u03a9': 'ohm', 'Ł': 'L', 'ł': 'l', 'Đ': 'D', 'đ': 'd', 'Ħ': 'H', 'ħ': 'h', 'Ŧ': 'T', 'ŧ': 't',
  '≤': '<=', '≥': '>=', '≈': '~', '→': '->', '←': '<-', '✓': 'v', '✔': 'v',
}
const SIG_SCALE = 0.62
// Sizes computed to fit exactly are taken a hair smaller, so rounding never tips them into an ellipsis.
const SHRINK = 0.998
const FONT_FILES = { regular: 'roboto-latin-400-normal.woff', bold: 'roboto-latin-700-normal.woff' }

/** Page and label size of a layout, in millimetres. */
export function layoutGeometry(l: SheetLayout) {
  const page = typeof l.page === 'string' ? PAGE_MM[l.page] : l.page
  const labelWidthMm = l.labelWidthMm ?? (page.widthMm - 2 * l.marginLeftMm - (l.cols - 1) * l.gapXMm) / l.cols
  const labelHeightMm = l.labelHeightMm ?? (page.heightMm - 2 * l.marginTopMm - (l.rows - 1) * l.gapYMm) / l.rows
  return { pageWidthMm: page.widthMm, pageHeightMm: page.heightMm, labelWidthMm, labelHeightMm }
}

/** Everything wrong with a layout, as sentences for the organiser; [] when it is usable. */
export function validateLayout(l: SheetLayout): string[] {
  const problems: string[] = []
  if (!l.id?.trim()) problems.push('the layout needs an id')
  if (!l.name?.trim()) problems.push('the layout needs a name')
  if (typeof l.page !== 'string' && !(l.page?.widthMm > 0 && l.page?.heightMm > 0))
    problems.push('the page width and height must be greater than 0 mm')
  if (!Number.isInteger(l.rows) || l.rows < 1 || !Number.isInteger(l.cols) || l.cols < 1)
    problems.push('rows and columns must be whole numbers, at least 1')
  for (const [name, v] of [['top margin', l.marginTopMm], ['left margin', l.marginLeftMm], ['column gap', l.gapXMm], ['row gap', l.gapYMm]] as const) {
    if (!Number.isFinite(v) || v < 0) problems.push(`the ${name} must be 0 mm or more`)
  }
  for (const [name, v] of [['label width', l.labelWidthMm], ['label height', l.labelHeightMm]] as const) {
    if (v !== undefined && !(Number.isFinite(v) && v > 0)) problems.push(`the ${name} must be greater than 0 mm`)
  }
  if (problems.length > 0) return problems

  const g = layoutGeometry(l)
  const usedWidth = l.marginLeftMm + l.cols * g.labelWidthMm + (l.cols - 1) * l.gapXMm
  const usedHeight = l.marginTopMm + l.rows * g.labelHeightMm + (l.rows - 1) * l.gapYMm
  if (usedWidth > g.pageWidthMm + FIT_SLACK_MM)
    problems.push(`the labels do not fit across the page: they need ${round1(usedWidth)} mm of ${round1(g.pageWidthMm)} mm`)
  if (usedHeight > g.pageHeightMm + FIT_SLACK_MM)
    problems.push(`the labels do not fit down the page: they need ${round1(usedHeight)} mm of ${round1(g.pageHeightMm)} mm`)
  if (g.labelWidthMm < MIN_LABEL_MM.width || g.labelHeightMm < MIN_LABEL_MM.height)
    problems.push(`each label is ${round1(g.labelWidthMm)} × ${round1(g.labelHeightMm)} mm: at least ${MIN_LABEL_MM.width} × ${MIN_LABEL_MM.height} mm is needed for a QR code phones can read`)
  return problems
}

/** Renders labels onto the layout's sheets, left to right then top to bottom; resolves to the PDF bytes. */
export async function renderLabels(labels: Label[], layout: SheetLayout, opts: RenderOptions = {}): Promise<Buffer> {
  const problems = validateLayout(layout)
  if (problems.length > 0) throw new Error(`label layout "${layout.id}" cannot be used: ${problems.join('; ')}`)
  const perPage = layout.rows * layout.cols
  const startAt = opts.startAt ?? 0
  if (!Number.isInteger(startAt) || startAt < 0 || startAt >= perPage)
    throw new Error(`startAt must be a whole number from 0 to ${perPage - 1} (the positions on one sheet)`)
  const copies = expandCopies(labels)
  const fonts = opts.fonts ? { regular: woffToSfnt(opts.fonts.regular), bold: woffToSfnt(opts.fonts.bold) } : loadFonts()
  const g = layoutGeometry(layout)

  // font: null keeps pdfkit from loading its standard Helvetica: the PDF holds Roboto only.
  const doc = new PDFDocument({ autoFirstPage: false, font: null, info: { Title: 'Kitwright labels', Producer: 'Kitwright', Creator: 'Kitwright' } } as unknown as PDFKit.PDFDocumentOptions)
  const chunks: Buffer[] = []
  doc.on('data', (c: Buffer) => chunks.push(c))
  const finished = new Promise<Buffer>((ok, fail) => {
    doc.on('end', () => ok(Buffer.concat(chunks)))
    doc.on('error', fail)
  })
  doc.registerFont('R', fonts.regular)
  doc.registerFont('B', fonts.bold)
  doc.font('R')
  const text = new TextFitter(doc)
  const qrCache = new Map<string, QrForm>()

  const pageCount = Math.max(1, Math.ceil((startAt + copies.length) / perPage))
  for (let p = 0; p < pageCount; p++) {
    doc.addPage({ size: [g.pageWidthMm * PT, g.pageHeightMm * PT], margin: 0 })
    for (let slot = 0; slot < perPage; slot++) {
      const label = copies[p * perPage + slot - startAt]
      if (!label) continue
      const col = slot % layout.cols
      const row = Math.floor(slot / layout.cols)
      const box = {
        x: (layout.marginLeftMm + col * (g.labelWidthMm + layout.gapXMm)) * PT,
        y: (layout.marginTopMm + row * (g.labelHeightMm + layout.gapYMm)) * PT,
        w: g.labelWidthMm * PT,
        h: g.labelHeightMm * PT,
      }
      drawLabel(doc, text, qrCache, label, box)
    }
  }
  doc.end()
  return finished
}

function expandCopies(labels: Label[]): Label[] {
  const out: Label[] = []
  for (const [i, label] of labels.entries()) {
    const n = label.count ?? 1
    if (!Number.isInteger(n) || n < 0 || n > 1000) throw new Error(`label ${i + 1} (${label.code}): count must be a whole number from 0 to 1000`)
    for (let k = 0; k < n; k++) out.push(label)
  }
  return out
}

let fontCache: { regular: Buffer; bold: Buffer } | undefined

/** Reads Roboto from server/assets/fonts (beside this module, or under the working folder), else from @fontsource/roboto. */
function loadFonts(): { regular: Buffer; bold: Buffer } {
  if (fontCache) return fontCache
  const req = createRequire(import.meta.url)
  const read = (file: string): Buffer => {
    const candidates = [
      () => fileURLToPath(new URL(`../assets/fonts/${file}`, import.meta.url)),
      () => resolve(process.cwd(), 'server/assets/fonts', file),
      () => req.resolve(`@fontsource/roboto/files/${file}`),
    ]
    for (const candidate of candidates) {
      try {
        const path = candidate()
        if (existsSync(path)) return woffToSfnt(readFileSync(path))
      }
      catch { /* try the next place */ }
    }
    throw new Error(`the label font ${file} was not found in server/assets/fonts or @fontsource/roboto: pass opts.fonts`)
  }
  fontCache = { regular: read(FONT_FILES.regular), bold: read(FONT_FILES.bold) }
  return fontCache
}

/**
 * Unpacks a WOFF 1.0 font into the plain TrueType/OpenType file it wraps (W3C WOFF File Format 1.0, §4–5).
 * fontkit reads WOFF directly but inflates tables again on every glyph lookup, which made rendering
 * several times slower; any other input is returned as it is.
 */
export function woffToSfnt(woff: Buffer): Buffer {
  if (woff.length < 44 || woff.toString('latin1', 0, 4) !== 'wOFF') return woff
  const numTables = woff.readUInt16BE(12)
  const tables = Array.from({ length: numTables }, (_, i) => {
    const at = 44 + i * 20
    const offset = woff.readUInt32BE(at + 4)
    const compLength = woff.readUInt32BE(at + 8)
    const origLength = woff.readUInt32BE(at + 12)
    const raw = woff.subarray(offset, offset + compLength)
    const data = compLength < origLength ? inflateSync(raw) : raw
    if (data.length !== origLength) throw new Error('the WOFF font file is damaged (a table has the wrong length)')
    return { tag: woff.subarray(at, at + 4), checksum: woff.readUInt32BE(at + 16), data }
  })
  let entrySelector = 0
  while (2 ** (entrySelector + 1) <= numTables) entrySelector++
  const head = Buffer.alloc(12 + 16 * numTables)
  woff.copy(head, 0, 4, 8) // sfnt version ("flavor")
  head.writeUInt16BE(numTables, 4)
  head.writeUInt16BE(16 * 2 ** entrySelector, 6)
  head.writeUInt16BE(entrySelector, 8)
  head.writeUInt16BE(16 * numTables - 16 * 2 ** entrySelector, 10)
  const parts: Buffer[] = [head]
  let offset = head.length
  tables.forEach((t, i) => {
    const at = 12 + 16 * i
    t.tag.copy(head, at)
    head.writeUInt32BE(t.checksum, at + 4)
    head.writeUInt32BE(offset, at + 8)
    head.writeUInt32BE(t.data.length, at + 12)
    const padded = Buffer.alloc((t.data.length + 3) & ~3)
    t.data.copy(padded)
    parts.push(padded)
    offset += padded.length
  })
  return Buffer.concat(parts)
}

interface Box { x: number; y: number; w: number; h: number }

function drawLabel(doc: PDFKit.PDFDocument, text: TextFitter, qrCache: Map<string, QrForm>, label: Label, box: Box): void {
  const edge = EDGE_MM * PT
  const pad = Math.min(Math.max(Math.min(box.w, box.h) * 0.06, 1.5 * PT), 3 * PT)
  let textX = box.x + pad
  if (label.qrText !== '') {
    const side = Math.min(box.h - 2 * edge, Math.max(box.w * 0.42, 24 * PT), 40 * PT)
    const qr = qrForm(doc, qrCache, label.qrText)
    drawQr(doc, qr, box.x + edge, box.y + (box.h - side) / 2, side)
    // The square already holds the 4-module quiet zone (ISO/IEC 18004): the text starts just after it.
    textX = box.x + edge + side
  }
  const area = { x: textX, y: box.y + pad, w: box.x + box.w - pad - textX, h: box.h - 2 * pad }
  if (area.w < 8 * PT) return
  drawTexts(doc, text, label, area)
}

interface QrForm { size: number; ref: PDFKit.PDFKitReference; name: string }

/** Each distinct QR text becomes one form XObject, drawn by reference on every label that carries it. */
function qrForm(doc: PDFKit.PDFDocument, cache: Map<string, QrForm>, qrText: string): QrForm {
  const hit = cache.get(qrText)
  if (hit) return hit
  const { size, data } = QRCode.create(qrText, { errorCorrectionLevel: 'M' }).modules
  // One path of module-unit rectangles filled once: the union has no anti-aliasing seams between modules.
  let path = '0 g\n'
  for (let r = 0; r < size; r++) {
    let c = 0
    while (c < size) {
      if (!data[r * size + c]) { c++; continue }
      const start = c
      while (c < size && data[r * size + c]) c++
      path += `${start} ${r} ${c - start} 1 re\n`
    }
  }
  const ref = doc.ref({ Type: 'XObject', Subtype: 'Form', BBox: [0, 0, size, size] })
  ref.end(`${path}f\n`)
  const form = { size, ref, name: `QR${cache.size + 1}` }
  cache.set(qrText, form)
  return form
}

/** Draws the symbol with its 4-module quiet zone inside a square of `side` points. */
function drawQr(doc: PDFKit.PDFDocument, qr: QrForm, x: number, y: number, side: number): void {
  const m = side / (qr.size + 2 * QUIET_MODULES)
  doc.page.xobjects[qr.name] = qr.ref
  // pdfkit's page space runs downward, so the form's rows do too (row 0 at the top).
  doc.addContent(`q ${fmt(m)} 0 0 ${fmt(m)} ${fmt(x + QUIET_MODULES * m)} ${fmt(y + QUIET_MODULES * m)} cm /${qr.name} Do Q`)
}

function fmt(v: number): string {
  return (Math.round(v * 1000) / 1000).toString()
}

// Roboto's vertical metrics as fractions of the font size (hhea ascent 1900, descent 500, cap height 1456 of 2048).
const ASCENT = 1900 / 2048
const DESCENT = 500 / 2048
const CAP = 1456 / 2048

/** Stacks the code, the title and the small lines from the top of `area`, each placed by its baseline. */
function drawTexts(doc: PDFKit.PDFDocument, text: TextFitter, label: Label, area: Box): void {
  const tone = label.tone ?? 'pouch'
  const { main, sig } = splitToken(label.code.trim())
  const hMm = area.h / PT
  const bottom = area.y + area.h
  const inset = tone === 'bag' ? 1.1 * PT : 0
  const codeMax = tone === 'bin' ? Math.min(32, hMm * 1.3) : Math.min(24, hMm * 0.95)
  const code = text.fitPair(main, sig, area.w - 2 * inset, codeMax, 7)
  let baseline = area.y + inset + CAP * code.size
  if (tone === 'bag') {
    doc.roundedRect(area.x, area.y, area.w, CAP * code.size + 2 * inset, 1.2).fill('black')
    doc.fillColor('white')
  }
  text.draw('B', code.main, code.size, area.x + inset, baseline)
  if (code.sig) text.draw('R', code.sig, code.size * SIG_SCALE, area.x + inset + code.mainWidth, baseline)
  doc.fillColor('black')
  let below = baseline + inset + (tone === 'bag' ? 0 : DESCENT * code.size * 0.5)

  if (label.title.trim()) {
    const title = text.fit('B', label.title, area.w, Math.min(14, Math.max(6.5, hMm * 0.3)), 6.5)
    const titleBaseline = below + 0.25 * title.size + CAP * title.size
    if (titleBaseline + DESCENT * title.size * 0.5 <= bottom) {
      text.draw('B', title.text, title.size, area.x, titleBaseline)
      below = titleBaseline + DESCENT * title.size
    }
  }
  drawLines(text, label.lines.filter(s => s.trim() !== ''), area, below, Math.min(10, Math.max(7.5, hMm * 0.2)))
}

const LINE_PITCH = 1.2

/** Small lines: the largest size from `max` down to 5.5 pt that shows them all, else as many as fit ending in "…". */
function drawLines(text: TextFitter, lines: string[], area: Box, below: number, max: number): void {
  if (lines.length === 0) return
  const bottom = area.y + area.h
  const firstBaseline = (size: number) => below + 0.2 * size + CAP * size
  const lastBaseline = (size: number, n: number) => firstBaseline(size) + (n - 1) * LINE_PITCH * size
  let size = max
  while (size > 5.5 && lastBaseline(size, lines.length) + DESCENT * size * 0.5 > bottom) size -= 0.5
  let fits = lines.length
  while (fits > 0 && lastBaseline(size, fits) + DESCENT * size * 0.5 > bottom) fits--
  const shown = lines.slice(0, fits)
  if (shown.length < lines.length && shown.length > 0) shown[shown.length - 1] = `${shown[shown.length - 1]} ${ELLIPSIS}`
  shown.forEach((line, i) => {
    const fitted = text.fit('R', line, area.w, size, size)
    text.draw('R', fitted.text, size, area.x, firstBaseline(size) + i * LINE_PITCH * size)
  })
}

function splitToken(code: string): { main: string; sig: string } {
  const match = new RegExp(`^(.+)-([A-Z0-9]{${SIG_LENGTH}})$`, 'i').exec(code)
  return match ? { main: match[1]!, sig: `-${match[2]!}` } : { main: code, sig: '' }
}

/** Measures and fits text with the embedded fonts, replacing characters the Roboto subset lacks. */
class TextFitter {
  private readonly doc: PDFKit.PDFDocument
  private readonly glyphs = new Map<number, boolean>()
  private current = ''

  constructor(doc: PDFKit.PDFDocument) {
    this.doc = doc
  }

  /** Draws one line with its baseline at `baseline`. */
  draw(font: 'R' | 'B', s: string, size: number, x: number, baseline: number): void {
    this.use(font)
    this.doc.fontSize(size).text(s, x, baseline - ASCENT * size, { lineBreak: false })
  }

  /** The largest size in [min, max] that fits `width`; at `min` the text is cut with an ellipsis. */
  fit(font: 'R' | 'B', raw: string, width: number, max: number, min: number): { text: string; size: number } {
    const s = this.clean(raw)
    const w = this.width(font, s, 1)
    const size = Math.max(min, Math.min(max, w > 0 ? (width / w) * SHRINK : max))
    if (w * size <= width) return { text: s, size }
    let lo = 0
    let hi = s.length
    while (lo < hi) {
      const mid = Math.ceil((lo + hi) / 2)
      if (this.width(font, s.slice(0, mid).trimEnd() + ELLIPSIS, size) <= width) lo = mid
      else hi = mid - 1
    }
    return { text: s.slice(0, lo).trimEnd() + ELLIPSIS, size }
  }

  /** Sizes the bold code and its smaller signature to share one line; a code is never cut, it shrinks instead. */
  fitPair(main: string, sig: string, width: number, max: number, min: number) {
    const m = this.clean(main)
    const unit = this.width('B', m, 1) + this.width('R', sig, SIG_SCALE)
    const fitting = unit > 0 ? (width / unit) * SHRINK : max
    const size = Math.min(max, fitting < min ? fitting : Math.max(min, fitting))
    return { main: m, sig, size, mainWidth: this.width('B', m, size) }
  }

  private width(font: 'R' | 'B', s: string, size: number): number {
    this.use(font)
    return this.doc.fontSize(size).widthOfString(s)
  }

  private use(font: 'R' | 'B'): void {
    if (this.current !== font) {
      this.doc.font(font)
      this.current = font
    }
  }

  /** One line of text the subset can show: control characters become spaces, accents fold, the rest becomes "?". */
  private clean(raw: string): string {
    let out = ''
    for (const ch of raw.replace(/[\u0000-\u001f\u007f]+/g, ' ')) {
      if (this.has(ch)) { out += ch; continue }
      const folded = FALLBACK[ch] ?? ch.normalize('NFD').replace(/\p{M}/gu, '')
      out += folded !== '' && [...folded].every(c => this.has(c)) ? folded : '?'
    }
    return out
  }

  private has(ch: string): boolean {
    const cp = ch.codePointAt(0)!
    let known = this.glyphs.get(cp)
    if (known === undefined) {
      this.use('R')
      const font = (this.doc as unknown as { _font: { font: { hasGlyphForCodePoint(c: number): boolean } } })._font.font
      known = font.hasGlyphForCodePoint(cp)
      this.glyphs.set(cp, known)
    }
    return known
  }
}

function round1(v: number): number {
  return Math.round(v * 10) / 10
}
