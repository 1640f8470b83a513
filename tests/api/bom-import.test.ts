// BOM import through the API: reading CSV and XLSX uploads (and refusing what must be refused),
// the preview (value readings, row errors and warnings, catalogue matches) and the all-or-none commit.
import ExcelJS from 'exceljs'
import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, DEMO, signedIn } from '../support/client'

const base = inject('baseUrl')
const dbUrl = inject('dbUrl')
const tag = Date.now().toString(36)
let org: Client
let db: mysql.Connection
let kitId: number
const made: Record<string, number> = {}

async function makePart(fields: Record<string, unknown>): Promise<number> {
  const cols = Object.keys(fields)
  const [res] = await db.query(`insert into parts (${cols.join(', ')}) values (${cols.map(() => '?').join(', ')})`, Object.values(fields)) as [mysql.ResultSetHeader, unknown]
  return res.insertId
}
async function count(sql: string, args: unknown[] = []): Promise<number> {
  const [rows] = await db.query(sql, args) as [{ n: number }[], unknown]
  return Number(rows[0]!.n)
}
function upload(bytes: Buffer | string, name: string, type = 'text/csv') {
  const form = new FormData()
  form.append('file', new Blob([bytes], { type }), name)
  return org.post(`/api/kits/${kitId}/import/file`, form)
}

// A designer's messy BOM: a title line above the header, mixed value styles, a range with a gap
// (R1-R3, R5), a quantity that disagrees with its designators (C1-C3 × 2), a capacitor without a
// unit, a reversed range, and a part known only by its number.
const MESSY = [
  'BOM export for the Heron receiver,,,,,,',
  'Ref,Qty,Value,Footprint,Description,MPN,Stage',
  '"R1-R3, R5",4,4K7 1/4W,Axial,,,Audio',
  'R6,1,61K9 1/4W,Axial,,,Audio',
  'R7 R8,2,38k3,Axial,,,Audio',
  'R9,1,71.5k,Axial,,,Power',
  'C1-C3,2,100n 50V X7R,Disc,,,Power',
  'C4,1,22,Disc,,,Power',
  `Q1,1,HX${tag},TO-92,NPN transistor,,Power`,
  'R12-R10,3,1k,Axial,,,Power',
].join('\r\n')

beforeAll(async () => {
  org = await signedIn(base, DEMO.organiser)
  db = await mysql.createConnection({ uri: dbUrl })
  kitId = (await org.post('/api/kits', { name: `Heron ${tag}` })).body.kit.id
  // Values chosen from E192 so that no demo part shares them (IEC 60063 E192: 6.19, 3.83, 7.15).
  made.r619 = await makePart({ kind: 'resistor', name: `Resistor 61.9 kΩ 0.25 W ${tag}`, value: 61900, unit: 'Ω', power_w: 0.25, tolerance_pct: 1, mounting: 'tht', package: 'axial' })
  made.r619small = await makePart({ kind: 'resistor', name: `Resistor 61.9 kΩ 0.125 W ${tag}`, value: 61900, unit: 'Ω', power_w: 0.125, tolerance_pct: 1, mounting: 'tht' })
  made.r383a = await makePart({ kind: 'resistor', name: `Resistor 38.3 kΩ metal film ${tag}`, value: 38300, unit: 'Ω', power_w: 0.25, tolerance_pct: 1, mounting: 'tht' })
  made.r383b = await makePart({ kind: 'resistor', name: `Resistor 38.3 kΩ thick film ${tag}`, value: 38300, unit: 'Ω', power_w: 0.6, tolerance_pct: 1, mounting: 'tht' })
})
afterAll(async () => { await db.end() })

describe('reading the upload', () => {
  it('reads a messy CSV: finds the header under a title line and guesses the columns', async () => {
    const res = await upload(MESSY, 'heron.csv')
    expect(res.status).toBe(200)
    expect(res.body.format).toBe('csv')
    expect(res.body.headers).toEqual(['Ref', 'Qty', 'Value', 'Footprint', 'Description', 'MPN', 'Stage'])
    expect(res.body.firstRowNumber).toBe(3)
    expect(res.body.rows).toHaveLength(8)
    expect(Object.values(res.body.mapping)).toEqual(['designators', 'qty', 'value', 'package', 'description', 'mpn', 'stage'])
  })

  it('reads the same BOM from an .xlsx (numbers come back as text)', async () => {
    const wb = new ExcelJS.Workbook()
    const ws = wb.addWorksheet('BOM')
    ws.addRow(['Designator', 'Quantity', 'Comment'])
    ws.addRow(['R1-R3, R5', 4, '4K7 1/4W'])
    ws.addRow(['C1', 1, { richText: [{ text: '100n ' }, { text: '50V', font: { bold: true } }] }])
    const res = await upload(Buffer.from(await wb.xlsx.writeBuffer()), 'bom.xlsx', 'application/octet-stream')
    expect(res.status).toBe(200)
    expect(res.body.format).toBe('xlsx')
    expect(res.body.sheet).toBe('BOM')
    expect(res.body.rows).toEqual([['R1-R3, R5', '4', '4K7 1/4W'], ['C1', '1', '100n 50V']])
    expect(Object.values(res.body.mapping)).toEqual(['designators', 'qty', 'value'])
  })

  it('refuses an .xlsx holding a formula with 422 naming the cell', async () => {
    const wb = new ExcelJS.Workbook()
    const ws = wb.addWorksheet('BOM')
    ws.addRow(['Designator', 'Quantity', 'Value'])
    ws.addRow(['R1-R4', 4, '4K7'])
    ws.getCell('B3').value = { formula: 'B2*2', result: 8 }
    ws.getCell('A3').value = 'R5-R12'
    const res = await upload(Buffer.from(await wb.xlsx.writeBuffer()), 'sums.xlsx')
    expect(res.status).toBe(422)
    expect(res.body.message).toMatch(/Cell B3 holds a formula/)
  })

  it.each([
    ['an empty file', Buffer.alloc(0), 'empty.csv', /empty/],
    ['blank lines only', '\r\n \r\n', 'blank.csv', /empty/],
    ['a header and no rows', 'Ref,Qty,Value\r\n', 'header.csv', /no rows of parts/],
    ['a PNG', Buffer.from('89504e470d0a1a0a0000000d49484452', 'hex'), 'bom.csv', /not a CSV or XLSX/],
    ['an old .xls', Buffer.concat([Buffer.from('d0cf11e0a1b11ae1', 'hex'), Buffer.alloc(600)]), 'bom.xls', /old-style \.xls/],
    ['a PDF', Buffer.from('%PDF-1.7\n%…'), 'bom.pdf', /PDF/],
    ['a damaged .xlsx', Buffer.concat([Buffer.from('504b0304', 'hex'), Buffer.alloc(300, 7)]), 'bom.xlsx', /not a readable \.xlsx/],
    ['an unclosed quote', 'Ref,Qty,Value\r\n"R1,1,4K7\r\nR2,1,1k\r\n', 'quote.csv', /quoted field is not closed/],
  ])('refuses %s with 422 and a clear message', async (_what, bytes, name, message) => {
    const res = await upload(bytes as Buffer, name)
    expect(res.status).toBe(422)
    expect(res.body.message).toMatch(message)
  })

  it('refuses a file over 5 MB with 413', async () => {
    const big = `Ref,Qty,Value\r\n${'R1,1,4K7\r\n'.repeat(560_000)}`
    expect(Buffer.byteLength(big)).toBeGreaterThan(5 * 1024 * 1024)
    const res = await upload(big, 'big.csv')
    expect(res.status).toBe(413)
    expect(res.body.message).toMatch(/limit is 5\.0 MB/)
  })

  it('asks for a file when none is sent (400)', async () => {
    const res = await org.post(`/api/kits/${kitId}/import/file`, new FormData())
    expect(res.status).toBe(400)
  })

  it('reads semicolon-separated Windows-1252 text (µ is byte B5 in Windows-1252)', async () => {
    const bytes = Buffer.concat([Buffer.from('Ref;Qty;Value\r\nC1;1;10'), Buffer.from([0xB5]), Buffer.from('F 25V\r\n')])
    const res = await upload(bytes, 'win.csv')
    expect(res.status).toBe(200)
    expect(res.body.rows).toEqual([['C1', '1', '10µF 25V']])
  })
})

async function table() {
  return (await upload(MESSY, 'heron.csv')).body
}
// Other test files add common parts to the shared database (a plain 100 nF X7R, say), which can make a
// row of this BOM ambiguous: any such row the test does not decide itself takes the first candidate.
async function decide(t: unknown, decisions: Record<number, unknown>) {
  const preview = (await org.post(`/api/kits/${kitId}/import/preview`, t)).body
  const out: Record<number, unknown> = { ...decisions }
  for (const r of preview.rows) {
    if (r.match?.status === 'choice' && !(r.rowNumber in out)) out[r.rowNumber] = { use: r.match.candidates[0].id }
  }
  return out
}
function rowsByDesignators(rows: { designatorText: string }[]) {
  return Object.fromEntries(rows.map(r => [r.designatorText, r])) as Record<string, any>
}

describe('preview', () => {
  it('shows how each value was read, the row errors and warnings, and the catalogue match', async () => {
    const t = await table()
    const res = await org.post(`/api/kits/${kitId}/import/preview`, t)
    expect(res.status).toBe(200)
    const rows = rowsByDesignators(res.body.rows)
    // IEC 60062 RKM: 4K7 is 4.7 kΩ; 1/4W is a quarter watt.
    expect(rows['R1-R3, R5'].read.text).toBe('resistor 4.7 kΩ, 0.25 W')
    expect(rows['R1-R3, R5'].designators).toEqual(['R1', 'R2', 'R3', 'R5'])
    expect(rows['R1-R3, R5'].warnings).toEqual([])
    // The 0.125 W part does not meet a 1/4 W line: one match.
    expect(rows.R6.match).toMatchObject({ status: 'existing', partId: made.r619 })
    expect(rows['R7 R8'].match.status).toBe('choice')
    expect(rows['R7 R8'].match.candidates.map((c: { id: number }) => c.id).sort()).toEqual([made.r383a, made.r383b].sort())
    expect(rows.R9.match.status).toBe('new')
    expect(rows.R9.match.newPart).toMatchObject({ kind: 'resistor', name: 'Resistor 71.5 kΩ', value: 71500, unit: 'Ω', mounting: 'tht' })
    expect(rows['C1-C3'].read.text).toBe('capacitor 100 nF, 50 V, X7R')
    expect(rows['C1-C3'].warnings[0]).toMatch(/Quantity 2 differs from the 3 designators/)
    expect(rows.C4.match.status).toBe('unresolved')
    expect(rows.C4.warnings.join(' ')).toMatch(/"22" has no unit/)
    expect(rows.Q1.match).toMatchObject({ status: 'new', newPart: { kind: 'transistor', name: `HX${tag}`, package: 'TO-92', description: 'NPN transistor' } })
    expect(rows['R12-R10'].errors[0]).toMatch(/reversed/)
    const statuses = res.body.rows.map((r: { match: { status: string } }) => r.match.status)
    expect(res.body.counts).toMatchObject({ rows: 8, errors: 1, existing: statuses.filter((s: string) => s === 'existing').length, unresolved: 1 })
  })

  it('applies edits typed in the preview and leaves skipped rows out', async () => {
    const t = await table()
    const res = await org.post(`/api/kits/${kitId}/import/preview`, { ...t, edits: { 7: { qty: '3' }, 8: { value: '22p' } }, skip: [10] })
    const rows = rowsByDesignators(res.body.rows)
    expect(rows['C1-C3'].qty).toBe(3)
    expect(rows['C1-C3'].warnings).toEqual([])
    expect(rows.C4.read.text).toBe('capacitor 22 pF')
    expect(rows['R12-R10']).toBeUndefined()
    expect(res.body.counts.errors).toBe(0)
  })

  it('says what is wrong with a mapping that marks two columns as designators (400)', async () => {
    const t = await table()
    const res = await org.post(`/api/kits/${kitId}/import/preview`, { ...t, mapping: { ...t.mapping, 4: 'designators' } })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/More than one column is marked as designators \(columns A, E\)/)
  })
})

describe('commit: all rows or none', () => {
  const revisions = () => count('select count(*) n from revisions where kit_id = ?', [kitId])
  const parts = () => count('select count(*) n from parts')

  it('refuses while a row has errors, and writes nothing', async () => {
    const t = await table()
    const [r0, p0] = [await revisions(), await parts()]
    const res = await org.post(`/api/kits/${kitId}/import/commit`, { ...t, decisions: { 5: { use: made.r383a } } })
    expect(res.status).toBe(422)
    expect(res.body.message).toMatch(/rows 10/)
    expect(res.body.data.rows[0].rowNumber).toBe(10)
    expect([await revisions(), await parts()]).toEqual([r0, p0])
  })

  it('refuses while a "needs a choice" row has no decision, and writes nothing', async () => {
    const t = await table()
    const [r0, p0] = [await revisions(), await parts()]
    const res = await org.post(`/api/kits/${kitId}/import/commit`, { ...t, skip: [10] })
    expect(res.status).toBe(422)
    expect(res.body.message).toMatch(/Row 5 needs a choice/)
    expect([await revisions(), await parts()]).toEqual([r0, p0])
  })

  it('rolls everything back when one decision names a part that does not exist', async () => {
    const t = await table()
    const [r0, p0] = [await revisions(), await parts()]
    const res = await org.post(`/api/kits/${kitId}/import/commit`, { ...t, skip: [10], decisions: { 5: { use: 2_000_000_000 } } })
    expect(res.status).toBe(422)
    expect([await revisions(), await parts()]).toEqual([r0, p0])
  })

  it('creates a draft revision with every row, new parts from the readings, and stages in order of appearance', async () => {
    const t = await table()
    const p0 = await parts()
    const res = await org.post(`/api/kits/${kitId}/import/commit`, {
      ...t, fileName: 'heron.csv', skip: [10], edits: { 7: { qty: '3' } },
      decisions: await decide(t, { 3: { keepText: true }, 5: { use: made.r383b }, 9: { keepText: true } }),
    })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(res.body).toMatchObject({ label: 'A', lines: 7 })
    const d = (await org.get(`/api/revisions/${res.body.id}`)).body
    expect(d.revision.state).toBe('draft')
    expect(d.revision.notes).toBe('Imported from heron.csv')
    expect(d.stages.map((s: { name: string }) => s.name)).toEqual(['Audio', 'Power'])
    const lines = rowsByDesignators(d.lines.map((l: any) => ({ ...l, designatorText: l.designators })))
    expect(Object.keys(lines)).toEqual(['R1-R3, R5', 'R6', 'R7, R8', 'R9', 'C1-C3', 'C4', 'Q1'])
    expect(lines.R6.partId).toBe(made.r619)
    expect(lines['R7, R8'].partId).toBe(made.r383b)
    expect(lines['C1-C3'].qty).toBe(3)
    expect(lines.C4).toMatchObject({ partId: null, valueText: '22' })
    expect(lines.Q1).toMatchObject({ partId: null, valueText: `HX${tag}` })
    expect(lines['R1-R3, R5']).toMatchObject({ partId: null, valueText: '4K7 1/4W' })
    // R9 had no match: one part made from its reading.
    expect(res.body.newParts).toBe(1)
    expect(await parts()).toBe(p0 + 1)
    expect(lines.R9.part).toMatchObject({ kind: 'resistor', name: 'Resistor 71.5 kΩ', value: 71500, unit: 'Ω', mounting: 'tht' })
    // IEC 60062: 71.5 kΩ takes three digits, so five bands (violet brown green red), gold for the default 5 %.
    expect(lines.R9.value).toEqual({ text: '71.5 kΩ', letterCode: '71k5', marking: 'violet brown green red gold' })
  })

  it('a second import becomes revision B with A as its parent', async () => {
    const t = await table()
    const res = await org.post(`/api/kits/${kitId}/import/commit`, { ...t, skip: [10], decisions: await decide(t, { 3: { keepText: true }, 5: { create: true } }) })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(res.body.label).toBe('B')
    // "Make a new part" on a needs-a-choice row, and Q1 (kept as text in A) made from its reading.
    expect(res.body.newParts).toBe(2)
    const d = (await org.get(`/api/revisions/${res.body.id}`)).body
    const a = d.siblings.find((s: { label: string }) => s.label === 'A')
    expect(d.revision.parentId).toBe(a.id)
    const diff = (await org.get(`/api/revisions/${res.body.id}/diff`)).body
    expect(diff.changed.map((c: any) => [c.after.designators, c.fields])).toEqual(expect.arrayContaining([['C1-C3', ['qty']], ['R7, R8', ['part']]]))
  })
})

describe('carrying the options of the newest revision into an import', () => {
  let optKit: number
  let revA: number
  // Revision A's base lines, and its options: a band set (80 m replaces the 40 m crystal X1), an
  // add-on that adds J2, and a low-power build that removes R9 (the next file has no R9).
  const fileA = ['Ref,Qty,Value', `X1,1,XA${tag}`, `R9,1,RA${tag}`, `J1,1,JA${tag}`].join('\r\n')
  const fileB = ['Ref,Qty,Value', `X1,1,XB${tag}`, `J1,1,JB${tag}`, `L1,1,LB${tag}`].join('\r\n')
  async function importFile(text: string, extra: Record<string, unknown> = {}) {
    const form = new FormData()
    form.append('file', new Blob([text], { type: 'text/csv' }), 'options.csv')
    const t = (await org.post(`/api/kits/${optKit}/import/file`, form)).body
    const preview = (await org.post(`/api/kits/${optKit}/import/preview`, t)).body
    const keep = Object.fromEntries(preview.rows.map((r: { rowNumber: number }) => [r.rowNumber, { keepText: true }]))
    return { preview, commit: await org.post(`/api/kits/${optKit}/import/commit`, { ...t, decisions: keep, ...extra }) }
  }
  async function insert(table: string, fields: Record<string, unknown>) {
    const cols = Object.keys(fields)
    const [res] = await db.query(`insert into ${table} (${cols.join(', ')}) values (${cols.map(() => '?').join(', ')})`, Object.values(fields)) as [mysql.ResultSetHeader, unknown]
    return res.insertId
  }

  beforeAll(async () => {
    optKit = (await org.post('/api/kits', { name: `Plover ${tag}` })).body.kit.id
    const { commit } = await importFile(fileA)
    expect(commit.status, JSON.stringify(commit.body)).toBe(201)
    revA = commit.body.id
    const [lines] = await db.query('select id, designators from bom_lines where revision_id = ?', [revA]) as [{ id: number, designators: string }[], unknown]
    const base = Object.fromEntries(lines.map(l => [l.designators, l.id]))
    const band = await insert('option_groups', { revision_id: revA, name: 'Band', rule: 'one', sort_order: 1 })
    const extras = await insert('option_groups', { revision_id: revA, name: 'Extras', rule: 'zero-or-one', sort_order: 2 })
    await insert('options', { group_id: band, revision_id: revA, name: '40 m', sort_order: 1 })
    const m80 = await insert('options', { group_id: band, revision_id: revA, name: '80 m', sort_order: 2 })
    const phones = await insert('options', { group_id: extras, revision_id: revA, name: 'Headphone socket', sort_order: 1 })
    const quiet = await insert('options', { group_id: extras, revision_id: revA, name: 'Low power', sort_order: 2 })
    await insert('bom_lines', { revision_id: revA, designators: 'X1', qty: 1, value_text: `X80${tag}`, option_id: m80, replaces_line_id: base.X1, sort_order: 10 })
    await insert('bom_lines', { revision_id: revA, designators: 'J2', qty: 1, value_text: `J2${tag}`, option_id: phones, sort_order: 11 })
    await insert('bom_lines', { revision_id: revA, designators: 'R9', qty: 1, value_text: `R9${tag}`, option_id: quiet, removes_line_id: base.R9, sort_order: 12 })
  })

  it('shows the newest revision\'s options beside the preview', async () => {
    const form = new FormData()
    form.append('file', new Blob([fileB], { type: 'text/csv' }), 'b.csv')
    const t = (await org.post(`/api/kits/${optKit}/import/file`, form)).body
    const res = await org.post(`/api/kits/${optKit}/import/preview`, t)
    expect(res.status).toBe(200)
    expect(res.body.parentOptions).toEqual({
      revisionId: revA, label: 'A', lines: 3,
      groups: [{ name: 'Band', rule: 'one', options: ['40 m', '80 m'] }, { name: 'Extras', rule: 'zero-or-one', options: ['Headphone socket', 'Low power'] }],
    })
    // The first import of a kit has nothing to carry.
    expect((await org.post(`/api/kits/${kitId}/import/preview`, await table())).body.parentOptions).toBeNull()
  })

  it('copies groups, options and option lines, relinking a replaced line by its designators and saying which link it dropped', async () => {
    const { commit } = await importFile(fileB, { carryOptions: true, label: 'B' })
    expect(commit.status, JSON.stringify(commit.body)).toBe(201)
    expect(commit.body.carried).toEqual({ from: 'A', groups: 2, options: 4, lines: 3, dropped: [expect.stringMatching(/^Low power: R9 removed R9, which this import does not have$/)] })
    const d = (await org.get(`/api/revisions/${commit.body.id}`)).body
    expect(d.groups.map((g: { name: string, rule: string, options: { name: string }[] }) => [g.name, g.rule, g.options.map(o => o.name)]))
      .toEqual([['Band', 'one', ['40 m', '80 m']], ['Extras', 'zero-or-one', ['Headphone socket', 'Low power']]])
    const byText = Object.fromEntries(d.lines.map((l: { valueText: string }) => [l.valueText, l])) as Record<string, { id: number, optionId: number | null, replacesLineId: number | null, removesLineId: number | null }>
    const optionId = (name: string) => d.groups.flatMap((g: { options: { id: number, name: string }[] }) => g.options).find((o: { name: string }) => o.name === name).id
    // The 80 m crystal replaces B's own X1, not A's.
    expect(byText[`X80${tag}`]).toMatchObject({ optionId: optionId('80 m'), replacesLineId: byText[`XB${tag}`]!.id })
    expect(byText[`J2${tag}`]).toMatchObject({ optionId: optionId('Headphone socket'), replacesLineId: null, removesLineId: null })
    expect(byText[`R9${tag}`]).toMatchObject({ optionId: optionId('Low power'), removesLineId: null })
    // A is untouched: its own three option lines still point at its own lines.
    const [aLines] = await db.query('select count(*) n from bom_lines where revision_id = ? and option_id is not null', [revA]) as [{ n: number }[], unknown]
    expect(Number(aLines[0]!.n)).toBe(3)
  })

  it('leaves the options behind when not asked to carry them', async () => {
    const { commit } = await importFile(fileB, { label: 'C' })
    expect(commit.status).toBe(201)
    expect(commit.body.carried).toBeNull()
    const d = (await org.get(`/api/revisions/${commit.body.id}`)).body
    expect(d.groups).toEqual([])
    expect(d.lines).toHaveLength(3)
  })
})
