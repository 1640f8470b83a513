import { execFileSync } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import jsQR from 'jsqr'
import { afterAll, describe, expect, it } from 'vitest'
import { labelUrl, newBagCode, readScan, signCode } from '../../server/utils/codes'
import { type Label, type SheetLayout, SHEET_LAYOUTS, layoutGeometry, renderLabels, validateLayout, woffToSfnt } from '../../server/utils/labels'
import { type Grey, cropLabels, rasterise as rasteriseIn, SCAN_DPI as DPI, zbar } from '../support/label-scan'

// pngjs comes with qrcode (its PNG writer); it has no type package here.
const { PNG } = createRequire(import.meta.url)('pngjs') as { PNG: { sync: { read(b: Buffer): { width: number; height: number; data: Buffer } } } }

const SECRET = 'test-secret-for-label-codes-0123'
const BASE = 'https://kitwright.example.org'
const work = mkdtempSync(join(tmpdir(), 'kw-labels-'))
afterAll(() => rmSync(work, { recursive: true, force: true }))

function layout(id: string): SheetLayout {
  const found = SHEET_LAYOUTS.find(l => l.id === id)
  if (!found) throw new Error(`no layout ${id}`)
  return found
}

function bagLabel(code = newBagCode(), extra: Partial<Label> = {}): Label {
  return {
    qrText: labelUrl(BASE, 'bag', code, SECRET),
    code: signCode('bag', code, SECRET),
    title: 'Ada Lovelace',
    lines: ['40 m QRP transceiver, rev C', 'Options: 20 m band set', 'Bag: 6 pouches, 143 parts'],
    tone: 'bag',
    ...extra,
  }
}

function binLabel(code: string): Label {
  return { qrText: labelUrl(BASE, 'bin', code, SECRET), code: signCode('bin', code, SECRET), title: '10 k 1 % 0.25 W', lines: ['Shelf A'], tone: 'bin' }
}

const rasterise = (pdf: Buffer, name: string, format: 'png' | 'gray' = 'gray') => rasteriseIn(work, pdf, name, format)

/** The pure-JS jsqr decoder, on a PNG (read with pngjs) or a grey image. */
function jsqrDecode(image: string | Grey) {
  if (typeof image === 'string') {
    const png = PNG.sync.read(readFileSync(image))
    return jsQR(new Uint8ClampedArray(png.data.buffer, png.data.byteOffset, png.data.length), png.width, png.height)
  }
  const rgba = new Uint8ClampedArray(image.width * image.height * 4)
  for (let i = 0, j = 0; i < image.pixels.length; i++, j += 4) {
    rgba[j] = rgba[j + 1] = rgba[j + 2] = image.pixels[i]!
    rgba[j + 3] = 255
  }
  return jsQR(rgba, image.width, image.height)
}

function pdfText(pdf: Buffer, name: string): string {
  const file = join(work, `${name}.pdf`)
  writeFileSync(file, pdf)
  return execFileSync('pdftotext', ['-raw', file, '-']).toString('utf8')
}

describe('SHEET_LAYOUTS', () => {
  it('are all valid and have the stock sizes (common practice)', () => {
    for (const l of SHEET_LAYOUTS) expect(validateLayout(l), l.id).toEqual([])
    const size = (id: string) => { const g = layoutGeometry(layout(id)); return [g.labelWidthMm, g.labelHeightMm] }
    expect(size('a4-3x8')).toEqual([70, 37])
    expect(size('a4-2x7')).toEqual([99.1, 38.1])
    expect(size('letter-3x10')[0]).toBeCloseTo(66.675, 3) // 2.625 in
    expect(size('letter-3x10')[1]).toBeCloseTo(25.4, 3) // 1 in
    expect(size('letter-2x5')[0]).toBeCloseTo(101.6, 3)
    expect(size('thermal-62x29')).toEqual([62, 29])
    expect(size('thermal-50x30')).toEqual([50, 30])
    expect(layoutGeometry(layout('letter-3x10')).pageWidthMm).toBeCloseTo(215.9, 3) // ANSI Letter 8.5 × 11 in
    expect(layoutGeometry(layout('a4-3x8')).pageHeightMm).toBe(297) // ISO 216 A4
  })
})

describe('validateLayout', () => {
  const a4 = layout('a4-3x8')

  it('rejects labels that do not fit the page', () => {
    expect(validateLayout({ ...a4, labelWidthMm: 75 })).toEqual([expect.stringMatching(/do not fit across the page: they need 225 mm of 210 mm/)])
    expect(validateLayout({ ...a4, marginTopMm: 5 })).toEqual([expect.stringMatching(/do not fit down the page/)])
    expect(validateLayout({ ...a4, id: 'letter-3x8', page: 'Letter' })).toEqual([expect.stringMatching(/down the page: they need 296.5 mm of 279.4 mm/)])
  })

  it('rejects non-positive and broken sizes', () => {
    expect(validateLayout({ ...a4, rows: 0 })).toContain('rows and columns must be whole numbers, at least 1')
    expect(validateLayout({ ...a4, cols: 2.5 })).toContain('rows and columns must be whole numbers, at least 1')
    expect(validateLayout({ ...a4, labelWidthMm: 0 })).toContain('the label width must be greater than 0 mm')
    expect(validateLayout({ ...a4, gapXMm: -1 })).toContain('the column gap must be 0 mm or more')
    expect(validateLayout({ ...a4, page: { widthMm: 0, heightMm: 50 } })).toContain('the page width and height must be greater than 0 mm')
    expect(validateLayout({ ...a4, id: ' ' })).toContain('the layout needs an id')
  })

  it('rejects labels too small for a readable QR code', () => {
    const tiny: SheetLayout = { id: 'tiny', name: 'tiny', page: 'A4', rows: 25, cols: 10, marginTopMm: 0, marginLeftMm: 0, gapXMm: 0, gapYMm: 0 }
    expect(validateLayout(tiny)).toEqual([expect.stringMatching(/21 × 11.9 mm: at least 30 × 20 mm/)])
  })

  it('makes renderLabels refuse the layout and a startAt off the sheet', async () => {
    await expect(renderLabels([bagLabel()], { ...a4, labelWidthMm: 75 })).rejects.toThrow(/cannot be used: the labels do not fit across/)
    await expect(renderLabels([bagLabel()], a4, { startAt: 24 })).rejects.toThrow(/startAt must be a whole number from 0 to 23/)
  })
})

describe('renderLabels', () => {
  it('prints a full A4 sheet whose every label scans (zbar, jsqr) to its own signed URL', async () => {
    const labels = [...Array.from({ length: 21 }, () => bagLabel()), binLabel('A-03'), binLabel('B-12'), binLabel('SHELF2-C')]
    const l = layout('a4-3x8')
    const pages = rasterise(await renderLabels(labels, l), 'a4')
    expect(pages).toHaveLength(1)
    const crops = cropLabels(pages[0]!, l)
    const found = zbar(crops.map(c => c.file))
    crops.forEach(({ grey }, i) => {
      expect(found[i], `position ${i}`).toEqual([labels[i]!.qrText])
      expect(jsqrDecode(grey)?.data, `position ${i}`).toBe(labels[i]!.qrText)
      const read = readScan(labels[i]!.qrText, SECRET)
      expect(read).toEqual(i < 21 ? { kind: 'bag', code: labels[i]!.code.slice(0, 6) } : { kind: 'bin', code: labels[i]!.code.slice(0, -9) })
    })
  })

  it('prints the smallest sheet labels (US Letter 3 × 10, 1 in tall) so that all 30 scan', async () => {
    const labels = Array.from({ length: 30 }, () => bagLabel())
    const l = layout('letter-3x10')
    const crops = cropLabels(rasterise(await renderLabels(labels, l), 'letter')[0]!, l)
    zbar(crops.map(c => c.file)).forEach((found, i) => expect(found, `position ${i}`).toEqual([labels[i]!.qrText]))
  })

  it('prints a thermal label that the pure-JS jsqr decoder also reads', async () => {
    for (const id of ['thermal-62x29', 'thermal-50x30']) {
      const label = bagLabel('B7K3QX')
      const pages = rasterise(await renderLabels([label], layout(id)), id, 'png')
      expect(pages).toHaveLength(1)
      const found = jsqrDecode(pages[0]!)
      expect(found?.data).toBe(label.qrText)
      expect(readScan(found!.data, SECRET)).toEqual({ kind: 'bag', code: 'B7K3QX' })
    }
  })

  it('draws QR symbols at least 18 mm wide on every stock (measured by jsqr)', async () => {
    for (const l of SHEET_LAYOUTS) {
      const first = cropLabels(rasterise(await renderLabels([bagLabel()], l), `size-${l.id}`)[0]!, l)[0]!
      const loc = jsqrDecode(first.grey)!.location
      const widthMm = Math.hypot(loc.topRightCorner.x - loc.topLeftCorner.x, loc.topRightCorner.y - loc.topLeftCorner.y) / DPI * 25.4
      expect(widthMm, l.id).toBeGreaterThanOrEqual(18)
    }
  })

  it('embeds Roboto and no standard font (pdffonts, poppler)', async () => {
    const pdf = await renderLabels([bagLabel(), binLabel('A-03')], layout('a4-3x8'))
    expect(pdf.includes('Roboto-Regular')).toBe(true)
    expect(pdf.includes('Roboto-Bold')).toBe(true)
    expect(pdf.includes('Helvetica')).toBe(false)
    const file = join(work, 'fonts.pdf')
    writeFileSync(file, pdf)
    const rows = execFileSync('pdffonts', [file]).toString().split('\n').slice(2).filter(r => r.trim() !== '')
    expect(rows).toHaveLength(2)
    for (const row of rows) expect(row).toMatch(/^[A-Z]{6}\+Roboto-(Regular|Bold)\s+CID TrueType\s+Identity-H\s+yes yes yes/)
  })

  it('skips used positions, prints copies and fills further sheets', async () => {
    const a = bagLabel(undefined, { count: 3 })
    const others = Array.from({ length: 18 }, () => bagLabel())
    const l = layout('a4-3x8')
    const pages = rasterise(await renderLabels([a, ...others], l, { startAt: 5 }), 'start')
    expect(pages).toHaveLength(2) // 5 skipped + 21 labels > 24 positions
    const expected = [...Array(5).fill(null), a, a, a, ...others]
    const crops = pages.flatMap(p => cropLabels(p, l))
    const found = zbar(crops.map(c => c.file))
    crops.forEach(({ dark }, i) => {
      const label = expected[i]
      if (label) expect(found[i], `position ${i}`).toEqual([label.qrText])
      else expect(dark, `position ${i} is blank`).toBe(0)
    })
  })

  it('fits text: the code is whole, a long title is cut with an ellipsis, foreign letters fold (pdftotext)', async () => {
    const code = 'B7K3QX'
    const label = bagLabel(code, {
      title: 'Łukasz Brzęczyszczykiewicz-Wolkenstein of the Very Long Name',
      lines: ['10 kΩ trimmer, 100 µF', 'Stage 3: Audio', 'a', 'b', 'c', 'd', 'e', 'f', 'g', 'h'],
    })
    const text = pdfText(await renderLabels([label], layout('thermal-62x29')), 'text')
    expect(text.replace(/\s/g, '')).toContain(signCode('bag', code, SECRET))
    expect(text).toMatch(/Lukasz Brz[^\n]*…/)
    expect(text).not.toContain('Very Long Name')
    expect(text).toContain('10 kohm trimmer, 100 µF')
    expect(text).not.toMatch(/\bh\b/) // more lines than the label holds: the last ones are dropped
  })

  it('rejects a bad copy count', async () => {
    await expect(renderLabels([bagLabel(undefined, { count: -1 })], layout('a4-3x8'))).rejects.toThrow(/count must be a whole number/)
  })
})

describe('woffToSfnt', () => {
  it('unpacks the shipped WOFF into a TrueType file with the same tables (W3C WOFF 1.0)', () => {
    const woff = readFileSync(new URL('../../server/assets/fonts/roboto-latin-400-normal.woff', import.meta.url))
    const sfnt = woffToSfnt(woff)
    expect(sfnt.readUInt32BE(0)).toBe(woff.readUInt32BE(4)) // flavor becomes the sfnt version
    expect(sfnt.readUInt16BE(4)).toBe(woff.readUInt16BE(12))
    expect(sfnt.length).toBe(woff.readUInt32BE(16)) // WOFF header totalSfntSize
    // Each unpacked table sums to the checksum stored for it (OpenType spec, "Calculating checksums"); head is
    // summed with its checkSumAdjustment field, so it is left out.
    for (let i = 0; i < sfnt.readUInt16BE(4); i++) {
      const at = 12 + 16 * i
      const tag = sfnt.toString('latin1', at, at + 4)
      if (tag === 'head') continue
      const offset = sfnt.readUInt32BE(at + 8)
      const length = (sfnt.readUInt32BE(at + 12) + 3) & ~3
      let sum = 0
      for (let o = offset; o < offset + length; o += 4) sum = (sum + sfnt.readUInt32BE(o)) >>> 0
      expect(sum, tag).toBe(sfnt.readUInt32BE(at + 4))
    }
    expect(woffToSfnt(sfnt)).toBe(sfnt)
  })
})

describe('renderLabels with fonts passed in', () => {
  it('uses the given WOFF files (as a Nitro route would read them from server assets)', async () => {
    const read = (w: number) => readFileSync(new URL(`../../server/assets/fonts/roboto-latin-${w}-normal.woff`, import.meta.url))
    const pdf = await renderLabels([bagLabel('B7K3QX')], layout('thermal-62x29'), { fonts: { regular: read(400), bold: read(700) } })
    expect(pdf.includes('Roboto-Bold')).toBe(true)
    expect(pdfText(pdf, 'given-fonts').replace(/\s/g, '')).toContain(signCode('bag', 'B7K3QX', SECRET))
  })
})
