// Reading printed labels back as a scanner would, with tools independent of our renderer: poppler's
// pdftoppm rasterises the PDF, each label position is cut out of the sheet, and zbar decodes it.
// (zbar given a whole sheet of same-size symbols sometimes misses one that it reads alone; a phone or
// scanner sees one label at a time.)
import { execFileSync } from 'node:child_process'
import { readdirSync, readFileSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { type SheetLayout, layoutGeometry } from '../../server/utils/labels'

export const SCAN_DPI = 200

/** Rasterises a PDF with pdftoppm into `work` (`png`, or 8-bit grey PGM which is far quicker to write and cut); the page images in order. */
export function rasterise(work: string, pdf: Buffer, name: string, format: 'png' | 'gray' = 'gray'): string[] {
  const file = join(work, `${name}.pdf`)
  writeFileSync(file, pdf)
  execFileSync('pdftoppm', ['-r', String(SCAN_DPI), `-${format}`, file, join(work, name)])
  const ext = format === 'png' ? '.png' : '.pgm'
  return readdirSync(work).filter(f => f.startsWith(`${name}-`) && f.endsWith(ext)).sort().map(f => join(work, f))
}

export interface Grey { width: number; height: number; pixels: Buffer }

/** Netpbm binary greymap (P5, maxval 255), as pdftoppm -gray writes it. */
function readPgm(file: string): Grey {
  const buf = readFileSync(file)
  const head = /^P5\s+(\d+)\s+(\d+)\s+255\s/.exec(buf.toString('latin1', 0, 40))
  if (!head) throw new Error(`${file} is not an 8-bit PGM`)
  const width = Number(head[1])
  const height = Number(head[2])
  return { width, height, pixels: buf.subarray(head[0].length, head[0].length + width * height) }
}

function writePgm(file: string, g: Grey): void {
  writeFileSync(file, Buffer.concat([Buffer.from(`P5\n${g.width} ${g.height}\n255\n`, 'latin1'), g.pixels]))
}

/** Cuts a rasterised sheet (a PGM page) into one image per label position, row by row. */
export function cropLabels(pgm: string, l: SheetLayout): { file: string; dark: number; grey: Grey }[] {
  const page = readPgm(pgm)
  const g = layoutGeometry(l)
  const px = (mm: number) => Math.round(mm / 25.4 * SCAN_DPI)
  return Array.from({ length: l.rows * l.cols }, (_, i) => {
    const x = px(l.marginLeftMm + (i % l.cols) * (g.labelWidthMm + l.gapXMm))
    const y = px(l.marginTopMm + Math.floor(i / l.cols) * (g.labelHeightMm + l.gapYMm))
    const width = Math.min(px(g.labelWidthMm), page.width - x)
    const height = Math.min(px(g.labelHeightMm), page.height - y)
    const pixels = Buffer.alloc(width * height)
    for (let r = 0; r < height; r++) page.pixels.copy(pixels, r * width, (y + r) * page.width + x, (y + r) * page.width + x + width)
    const dark = pixels.reduce((n, v) => n + (v < 128 ? 1 : 0), 0)
    const file = pgm.replace(/\.pgm$/, `-pos${i}.pgm`)
    const grey = { width, height, pixels }
    writePgm(file, grey)
    return { file, dark, grey }
  })
}

/** The QR codes zbar (an independent C decoder) finds in each image, in the order of the images. */
export function zbar(images: string[]): string[][] {
  let xml: string
  try {
    xml = execFileSync('zbarimg', ['--xml', '-q', '-Sdisable', '-Sqrcode.enable', ...images], { stdio: ['ignore', 'pipe', 'ignore'] }).toString('utf8')
  }
  catch (e) {
    const { status, stdout } = e as { status?: number; stdout?: Buffer }
    if (status !== 4) throw e // 4: some image held no symbol
    xml = stdout?.toString('utf8') ?? ''
  }
  const found = new Map<string, string[]>()
  for (const [, href, body] of xml.matchAll(/<source href='([^']*)'>([\s\S]*?)<\/source>/g))
    found.set(href!, [...body!.matchAll(/<!\[CDATA\[([\s\S]*?)\]\]>/g)].map(m => m[1]!))
  return images.map(f => found.get(f) ?? [])
}

/** Every QR text on every label of a PDF sheet, label by label and page by page. */
export function scanSheet(work: string, pdf: Buffer, name: string, l: SheetLayout): string[] {
  return rasterise(work, pdf, name).flatMap(page => zbar(cropLabels(page, l).map(c => c.file)).flat())
}
