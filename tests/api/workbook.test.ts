// The BOM workbook: import a BOM, export it, read it back with exceljs and compare every line;
// open it with a second reader (LibreOffice's headless converter); the CSV; and the workbook
// function's bag features (packed column, highlighted warnings, safety block).
import { execFile } from 'node:child_process'
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { promisify } from 'node:util'
import ExcelJS from 'exceljs'
import Papa from 'papaparse'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { buildBomWorkbook, partValueWays, workbookCsv, type BomWorkbookInput } from '../../server/utils/workbook'
import { Client, DEMO, signedIn } from '../support/client'

const run = promisify(execFile)
const base = inject('baseUrl')
const tag = Date.now().toString(36)
const dir = mkdtempSync(join(tmpdir(), 'kw-workbook-'))
let org: Client

// Expected readings, worked out by hand from IEC 60062 (letter code, colour bands with gold for
// the default ±5 %, capacitor code in pF) — not from Kitwright's own functions.
const BOM: { d: string, qty: number, value: string, stage: string, notes?: string, want: { part: RegExp, text?: string, letter?: string, marking?: string } }[] = [
  { d: 'R1-R4', qty: 4, value: '5K62 1/4W', stage: 'Power supply', want: { part: /Resistor 5.62 kΩ/, text: '5.62 kΩ', letter: '5k62', marking: 'green blue red brown gold' } },
  { d: 'R5, R7', qty: 2, value: '2.49k', stage: 'Power supply', notes: '+5V rail', want: { part: /Resistor 2.49 kΩ/, text: '2.49 kΩ', letter: '2k49', marking: 'red yellow white brown gold' } },
  { d: 'R8', qty: 1, value: '1M82', stage: 'Audio', want: { part: /Resistor 1.82 MΩ/, text: '1.82 MΩ', letter: '1M82', marking: 'brown grey red yellow gold' } },
  { d: 'C1-C3, C5', qty: 4, value: '3n6 50V C0G', stage: 'Audio', want: { part: /Capacitor 3.6 nF C0G/, text: '3.6 nF', letter: '3n6', marking: '362' } },
  { d: 'C6', qty: 1, value: '910p', stage: 'Oscillator', want: { part: /Capacitor 910 pF/, text: '910 pF', letter: '910p', marking: '911' } },
  { d: 'C7', qty: 1, value: '13uF 25V electrolytic', stage: 'Power supply', want: { part: /Capacitor 13 µF/, text: '13 µF', letter: '13u', marking: '' } },
  { d: 'L1', qty: 1, value: '6u2', stage: 'Oscillator', want: { part: /Inductor 6.2 µH/, text: '6.2 µH', letter: '6u2', marking: '' } },
  { d: 'Y1', qty: 1, value: '10.106 MHz', stage: 'Oscillator', want: { part: /Crystal 10.106 MHz/, text: '10.106 MHz', letter: '', marking: '' } },
  { d: 'Q1-Q3', qty: 3, value: `RT${tag}`, stage: 'Audio', notes: '@flat side to C1', want: { part: new RegExp(`RT${tag}`) } },
  { d: '', qty: 2, value: `Knob KN${tag}`, stage: 'Case', want: { part: new RegExp(`Knob KN${tag}`) } },
]
const STAGES = ['Power supply', 'Audio', 'Oscillator', 'Case']

function csvOf() {
  const q = (s: string) => (/[",]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s)
  return ['Designators,Qty,Value,Stage,Notes', ...BOM.map(b => [b.d, String(b.qty), b.value, b.stage, b.notes ?? ''].map(q).join(','))].join('\n')
}

let revisionId: number
let xlsx: Buffer

beforeAll(async () => {
  org = await signedIn(base, DEMO.organiser)
  const kitId = (await org.post('/api/kits', { name: `Round trip ${tag}`, designerCredit: 'A. Designer' })).body.kit.id
  const form = new FormData()
  form.append('file', new Blob([csvOf()], { type: 'text/csv' }), 'round-trip.csv')
  const table = (await org.post(`/api/kits/${kitId}/import/file`, form)).body
  const preview = (await org.post(`/api/kits/${kitId}/import/preview`, table)).body
  expect(preview.rows.map((r: { match: { status: string } }) => r.match.status)).toEqual(Array(BOM.length).fill('new'))
  const commit = await org.post(`/api/kits/${kitId}/import/commit`, table)
  expect(commit.status).toBe(201)
  revisionId = commit.body.id
  const res = await fetch(`${base}/api/revisions/${revisionId}/workbook?format=xlsx`, { headers: { cookie: org.cookie } })
  expect(res.status).toBe(200)
  expect(res.headers.get('content-type')).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet')
  expect(res.headers.get('content-disposition')).toBe(`attachment; filename="round-trip-${tag}-rev-a.xlsx"`)
  xlsx = Buffer.from(await res.arrayBuffer())
})
afterAll(() => rmSync(dir, { recursive: true, force: true }))

/** The sheet's table as records keyed by column header, and where the header row is. */
function tableOf(ws: ExcelJS.Worksheet) {
  let head = 0
  ws.eachRow((row, n) => { if (!head && [1, 2].some(c => row.getCell(c).text === 'Designators')) head = n })
  expect(head, `no table header on sheet ${ws.name}`).toBeGreaterThan(0)
  const headers = (ws.getRow(head).values as string[]).slice(1)
  const records: Record<string, string | number>[] = []
  for (let n = head + 1; n <= ws.rowCount; n++) {
    const values = ws.getRow(n).values as (string | number)[]
    records.push(Object.fromEntries(headers.map((h, i) => [h, values[i + 1] ?? ''])))
  }
  return { head, headers, records }
}

describe('round trip: import → workbook → exceljs', () => {
  let wb: ExcelJS.Workbook
  beforeAll(async () => {
    wb = new ExcelJS.Workbook()
    await wb.xlsx.load(xlsx as never)
  })

  it('has a whole-BOM sheet, then one sheet per stage in build order', () => {
    expect(wb.worksheets.map(w => w.name)).toEqual(['Whole BOM', ...STAGES])
  })

  it('reads back every line: designators compressed, quantity, part and the value three ways', () => {
    const { records } = tableOf(wb.getWorksheet('Whole BOM')!)
    expect(records).toHaveLength(BOM.length)
    for (const b of BOM) {
      const r = records.find(x => x.Designators === b.d && String(x.Part).match(b.want.part))
      expect(r, `line ${b.d || b.value}`).toBeDefined()
      expect(r!.Qty).toBe(b.qty)
      expect(r!.Stage).toBe(b.stage)
      if (b.want.text) expect([r!.Value, r!['Letter code'], r!['Colour bands / code']]).toEqual([b.want.text, b.want.letter, b.want.marking])
    }
  })

  it('neutralises text cells that a spreadsheet would run (OWASP "CSV Injection")', () => {
    const { records } = tableOf(wb.getWorksheet('Whole BOM')!)
    expect(records.map(r => r.Notes).filter(Boolean).sort()).toEqual(['\'+5V rail', '\'@flat side to C1'])
  })

  it('puts each stage\'s lines on its own sheet, ordered by stage then first designator', () => {
    for (const s of STAGES) {
      const { headers, records } = tableOf(wb.getWorksheet(s)!)
      expect(headers).not.toContain('Stage')
      expect(records.map(r => r.Designators)).toEqual(BOM.filter(b => b.stage === s).map(b => b.d).sort((x, y) => (x === '' ? 1 : y === '' ? -1 : x.localeCompare(y))))
    }
    const whole = tableOf(wb.getWorksheet('Whole BOM')!).records
    expect([...new Set(whole.map(r => r.Stage))]).toEqual(STAGES)
  })

  it('has the header block, a frozen header row, sized columns and fit-to-width printing', () => {
    const ws = wb.getWorksheet('Whole BOM')!
    const { head } = tableOf(ws)
    expect(ws.getCell('A1').text).toBe(`Round trip ${tag} — bill of materials`)
    const pairs = Object.fromEntries(Array.from({ length: head - 2 }, (_, i) => [ws.getCell(`A${i + 2}`).text, ws.getCell(`B${i + 2}`).text]))
    expect(pairs).toMatchObject({ Kit: `Round trip ${tag}`, Revision: 'A (draft)', Options: 'none offered', Designer: 'A. Designer', Sheet: 'Whole BOM' })
    expect(ws.views[0]).toMatchObject({ state: 'frozen', ySplit: head })
    expect(ws.pageSetup).toMatchObject({ fitToPage: true, fitToWidth: 1, fitToHeight: 0, orientation: 'landscape' })
    expect(ws.pageSetup.printTitlesRow).toBe(`${head}:${head}`)
    for (let c = 1; c <= 10; c++) expect(ws.getColumn(c).width, `column ${c}`).toBeGreaterThanOrEqual(6)
    expect(String(ws.autoFilter)).toMatch(new RegExp(`^A${head}:[A-Z]+${head}$`)) // the filter spans the header row
  })
})

describe('a second reader', () => {
  it('LibreOffice converts the workbook to CSV with every line (proves it is a valid .xlsx)', async () => {
    expect(existsSync('/usr/bin/soffice'), 'LibreOffice (libreoffice-calc-nogui) must be installed for this check').toBe(true)
    const file = join(dir, 'bom.xlsx')
    writeFileSync(file, xlsx)
    // 44,34,76: comma, double quote, UTF-8 (LibreOffice's CSV filter options).
    await run('/usr/bin/soffice', [`-env:UserInstallation=file://${join(dir, 'lo-profile')}`, '--headless', '--convert-to', 'csv:Text - txt - csv (StarCalc):44,34,76,1', '--outdir', dir, file], { timeout: 180_000 })
    const rows = Papa.parse<string[]>(readFileSync(join(dir, 'bom.csv'), 'utf8'), { skipEmptyLines: true }).data
    const head = rows.findIndex(r => r[1] === 'Designators')
    expect(rows[head]!.slice(0, 4)).toEqual(['Stage', 'Designators', 'Qty', 'Part'])
    const lines = rows.slice(head + 1)
    expect(lines).toHaveLength(BOM.length)
    for (const b of BOM) expect(lines.some(l => l[1] === b.d && l[2] === String(b.qty) && b.want.part.test(l[3]!))).toBe(true)
  }, 200_000)
})

describe('the CSV', () => {
  it('carries the header block and every line, neutralised, with a byte-order mark for spreadsheets', async () => {
    const res = await fetch(`${base}/api/revisions/${revisionId}/workbook?format=csv`, { headers: { cookie: org.cookie } })
    expect(res.headers.get('content-type')).toBe('text/csv; charset=utf-8')
    const bytes = new Uint8Array(await res.arrayBuffer())
    expect([...bytes.slice(0, 3)]).toEqual([0xEF, 0xBB, 0xBF])
    const text = new TextDecoder().decode(bytes)
    const rows = Papa.parse<string[]>(text, { skipEmptyLines: true }).data
    expect(rows[1]).toEqual(['Kit', `Round trip ${tag}`])
    const head = rows.findIndex(r => r[1] === 'Designators')
    const lines = rows.slice(head + 1)
    expect(lines).toHaveLength(BOM.length)
    expect(lines.find(l => l[1] === 'R5, R7')![9]).toBe('\'+5V rail')
  })
})

describe('buildBomWorkbook for a bag', () => {
  const input: BomWorkbookInput = {
    title: 'Order 42 — Wren 40',
    header: [['Order', '42'], ['Builder', 'Test Builder']],
    stages: ['Mixer: RF [A]', 'Mixer/ RF [A]'],
    cautions: ['Solder in a ventilated place.', '=1+1 is not a formula here'],
    lines: [
      { designators: 'Q1', qty: 1, stage: 'Mixer: RF [A]', part: 'NPN small-signal transistor, EBC', packed: 'NPN small-signal transistor, CBE (stand-in)', warning: 'Pinout differs: turn it 180°' },
      { designators: 'R1-R3', qty: 3, stage: 'Mixer/ RF [A]', part: '=HYPERLINK("http://x")', value: partValueWays({ kind: 'resistor', value: 4700, unit: 'Ω', tolerancePct: 5, mounting: 'tht' }) },
    ],
  }

  it('adds Packed and Warning columns (the warning highlighted), a safety block, and safe sheet names', async () => {
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await buildBomWorkbook(input) as never)
    // Sheet names may not hold : / [ ] and must be unique within 31 characters (the spreadsheet's rule).
    expect(wb.worksheets.map(w => w.name)).toEqual(['Whole BOM', 'Mixer  RF  A', 'Mixer  RF  A (2)'])
    const ws = wb.getWorksheet('Whole BOM')!
    const { head, headers, records } = tableOf(ws)
    expect(headers.slice(-2)).toEqual(['Packed', 'Warning'])
    expect(records[0]).toMatchObject({ Packed: 'NPN small-signal transistor, CBE (stand-in)', Warning: 'Pinout differs: turn it 180°' })
    const warnCell = ws.getRow(head + 1).getCell(headers.indexOf('Warning') + 1)
    expect((warnCell.fill as ExcelJS.FillPattern).fgColor?.argb).toBe('FFFDE9B8')
    expect(records[1]!.Part).toBe('\'=HYPERLINK("http://x")')
    expect(records[1]!['Colour bands / code']).toBe('yellow violet red gold')
    const texts: string[] = []
    ws.eachRow((r, n) => { if (n < head) texts.push(r.getCell(1).text) })
    expect(texts).toEqual(expect.arrayContaining(['Safety', '• Solder in a ventilated place.', '• =1+1 is not a formula here']))
  })

  it('has no Packed or Warning column when no line uses them', async () => {
    const plain = { ...input, lines: [input.lines[1]!] }
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(await buildBomWorkbook(plain) as never)
    expect(tableOf(wb.getWorksheet('Whole BOM')!).headers).not.toContain('Warning')
  })

  it('writes the safety block into the CSV too, neutralised', () => {
    const rows = Papa.parse<string[]>(workbookCsv(input), { skipEmptyLines: true }).data
    expect(rows).toContainEqual(['Safety', 'Solder in a ventilated place.'])
    const head = rows.findIndex(r => r[1] === 'Designators')
    expect(rows[head + 2]![3]).toBe('\'=HYPERLINK("http://x")')
  })
})
