import { randomBytes } from 'node:crypto'
import ExcelJS from 'exceljs'
import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import * as schema from '../../server/db/schema'
import { type Client, DEMO, signedIn } from '../support/client'

// Invented test kit (numbers worked by hand below):
//   base:  A ×2 (100 received, 10 reserved by a paid order → 90), B ×1 (20; C may stand in, 15 in stock), F ×1 (25)
//   option X: D ×1 (12)        option Y: E ×1 (30)
// Mix 18 × X + 12 × Y = 30 kits: A 60 ≤ 90; B 30 = 20 own + 10 of C; F short 5; D short 6; E 12 ≤ 30.
// Buildable now in the 18 : 12 proportion: D limits X to 12, and the D'Hondt split of 20 kits is 12 + 8 (21 → 13 + 8).

const base = inject('baseUrl')
const stem = randomBytes(3).toString('hex').toUpperCase()
let pool: mysql.Pool
let db: MySql2Database<typeof schema>
let org: Client
const P: Record<string, number> = {}
let revisionId: number
let optX: number
let optY: number
const suppliers = { cheap: `Test Parts Co ${stem}`, other: `Other Supply ${stem}` }

async function insertId<T extends Parameters<MySql2Database<typeof schema>['insert']>[0]>(table: T, values: T['$inferInsert']) {
  const [row] = await db.insert(table).values(values as never).$returningId() as { id: number }[]
  return row!.id
}

async function fixture() {
  const kinds = { A: 'resistor', B: 'transistor', C: 'transistor', D: 'crystal', E: 'crystal', F: 'hardware' } as const
  for (const [k, kind] of Object.entries(kinds)) P[k] = await insertId(schema.parts, { kind, name: `Test ${kind} ${k} ${stem}` })
  const group = await insertId(schema.swapGroups, { name: `Test group ${stem}`, warning: 'Pinout differs: turn it round' })
  await db.insert(schema.swapGroupMembers).values([{ groupId: group, partId: P.B!, direction: 'replaced' }, { groupId: group, partId: P.C!, direction: 'replaces' }])
  const kit = await insertId(schema.kits, { name: `Test kit ${stem}`, slug: `test-kit-${stem.toLowerCase()}` })
  revisionId = await insertId(schema.revisions, { kitId: kit, label: 'A', state: 'released' })
  const stage = await insertId(schema.stages, { revisionId, name: 'Everything', sortOrder: 1 })
  const line = (designators: string, qty: number, partId: number, optionId: number | null = null) => ({ revisionId, designators, qty, partId, stageId: stage, optionId })
  await db.insert(schema.bomLines).values([line('R1, R2', 2, P.A!), line('Q1', 1, P.B!), line('HW1', 1, P.F!)])
  const g = await insertId(schema.optionGroups, { revisionId, name: 'Band set', rule: 'one' })
  optX = await insertId(schema.options, { groupId: g, revisionId, name: '40 m' })
  optY = await insertId(schema.options, { groupId: g, revisionId, name: '80 m' })
  await db.insert(schema.bomLines).values([line('X1', 1, P.D!, optX), line('X1', 1, P.E!, optY)])
  // A paid order of someone else's build day holds 10 of A.
  const user = await insertId(schema.users, { email: `stock.${stem.toLowerCase()}@club.invalid`, name: 'Test Buyer', passwordHash: 'x' })
  const day = await insertId(schema.buildDays, { name: `Test day ${stem}`, date: '2020-01-01', venue: 'Test hall', seats: 1, salesOpenAt: new Date('2019-12-01'), salesCloseAt: new Date('2019-12-31') })
  const offering = await insertId(schema.offerings, { buildDayId: day, revisionId, allowedOptionIds: [optX, optY], memberPriceMinor: 100, nonMemberPriceMinor: 100 })
  const order = await insertId(schema.orders, { buildDayId: day, offeringId: offering, userId: user, optionIds: [optX], state: 'paid', amountMinor: 100, currency: 'GBP' })
  await db.insert(schema.reservations).values({ orderId: order, lineId: 0, partId: P.A!, qty: 10, state: 'confirmed' })
  await db.insert(schema.supplierOffers).values([
    { partId: P.D!, supplier: suppliers.other, currency: 'GBP', minQty: 1, packSize: 1, breaks: [{ qty: 1, unitPriceMinor: 80 }] },
    { partId: P.F!, supplier: suppliers.other, currency: 'GBP', minQty: 1, packSize: 1, breaks: [{ qty: 1, unitPriceMinor: 12 }, { qty: 100, unitPriceMinor: 9 }] },
  ])
}

function query(extra: Record<string, unknown> = {}) {
  const q = new URLSearchParams({ revisionId: String(revisionId), mix: JSON.stringify([{ optionIds: [optX], count: 18 }, { optionIds: [optY], count: 12 }]) })
  for (const [k, v] of Object.entries(extra)) q.set(k, typeof v === 'string' ? v : JSON.stringify(v))
  return q.toString()
}

beforeAll(async () => {
  pool = mysql.createPool({ uri: inject('dbUrl'), timezone: 'Z', dateStrings: ['DATE'], connectionLimit: 4 })
  db = drizzle(pool, { schema, mode: 'default' })
  org = await signedIn(base, DEMO.organiser)
  await fixture()
  const bin = `R${stem.slice(0, 4)}-1`
  expect((await org.post('/api/bins', { code: bin })).status).toBe(201)
  for (const [k, qty] of [['A', 100], ['B', 20], ['C', 15], ['D', 12], ['E', 30], ['F', 25]] as const) {
    const res = await org.post('/api/lots', { bin, partId: P[k], qty, unitCostMinor: 10, receivedOn: '2026-12-01' })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
  }
})

afterAll(async () => {
  await pool.end()
})

describe('reconciliation of an options mix', () => {
  it('lists the revision with its option groups to choose from', async () => {
    const res = await org.get('/api/reconcile/choices')
    const rev = res.body.find((r: { id: number }) => r.id === revisionId)
    expect(rev).toMatchObject({ label: 'A', kitName: `Test kit ${stem}`, groups: [{ name: 'Band set', options: [{ id: optX, name: '40 m' }, { id: optY, name: '80 m' }] }] })
  })

  it('counts reservations, uses the stand-in with its warning, and gives the least shortfall at the target', async () => {
    const res = await org.get(`/api/reconcile?${query()}`)
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    const r = res.body
    expect(r.target).toBe(30)
    expect(r.buildable).toBe(20)
    expect(r.choices.map((c: Record<string, unknown>) => [c.label, c.targetKits, c.buildableKits, c.aloneMaxKits])).toEqual([['40 m', 18, 12, 12], ['80 m', 12, 8, 25]])
    const byPart = (k: string) => r.lines.find((l: { partId: number }) => l.partId === P[k])
    expect(byPart('A')).toMatchObject({ qtyPerKit: 2, kits: 30, demand: 60, onHand: 100, reserved: 10, available: 90, own: 60, short: 0 })
    expect(byPart('B')).toMatchObject({ demand: 30, own: 20, short: 0, standIns: [{ partId: P.C, qty: 10, warning: 'Pinout differs: turn it round' }] })
    expect(byPart('D')).toMatchObject({ kits: 18, demand: 18, own: 12, short: 6 })
    expect(byPart('E')).toMatchObject({ kits: 12, demand: 12, own: 12, short: 0 })
    expect(byPart('F')).toMatchObject({ demand: 30, own: 25, short: 5 })
    expect(r.shortTotal).toBe(11)
  })

  it('scales the mix to another target and refuses bad input with field messages', async () => {
    const at20 = (await org.get(`/api/reconcile?${query({ target: '20' })}`)).body
    expect(at20.shortTotal).toBe(0)
    expect(at20.choices.map((c: { targetKits: number }) => c.targetKits)).toEqual([12, 8])
    const bad = await org.get(`/api/reconcile?${query({ target: '-3', mix: 'not json' })}`)
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.data.fields).sort()).toEqual(['mix', 'target'])
    const both = await org.get(`/api/reconcile?${query({ mix: [{ optionIds: [optX, optY], count: 1 }] })}`)
    expect(both.status).toBe(400)
    expect(both.body.message).toMatch(/Choose only one option from "Band set"/)
    expect((await org.get(`/api/reconcile?${query({ revisionId: '99999999' })}`)).status).toBe(404)
  })
})

describe('buy list', () => {
  beforeAll(async () => {
    const res = await org.post('/api/supplier-offers', {
      partId: P.D, supplier: suppliers.cheap, supplierRef: '=HYPERLINK("x")', currency: 'GBP', minQty: 10, packSize: 5,
      breaks: [{ qty: 20, unitPriceMinor: 20 }, { qty: 1, unitPriceMinor: 50 }, { qty: 10, unitPriceMinor: 45 }],
    })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(res.body.breaks.map((b: { qty: number }) => b.qty)).toEqual([1, 10, 20])
  })

  it('buys more where a price break makes it cheaper, picks the cheaper supplier, and groups by supplier', async () => {
    const res = await org.get(`/api/buy-list?${query()}`)
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    const b = res.body
    // D: need 6; 10 (minimum, pack of 5) at 45 = 450; 20 at 20 = 400; the other supplier 6 at 80 = 480 → 20 at 20.
    // F: need 5 at 12 = 60 (100 at 9 = 900). A: 30 spares wanted (1 per kit, common practice), 30 left over → none.
    expect(b.items.map((i: Record<string, unknown>) => [i.partId, i.supplier, i.need, i.qty, i.packs, i.unitPriceMinor, i.totalMinor]).sort()).toEqual([
      [String(P.D), suppliers.cheap, 6, 20, 4, 20, 400],
      [String(P.F), suppliers.other, 5, 5, 5, 12, 60],
    ].sort())
    expect(b.totalMinor).toBe(460)
    expect(b.currency).toBe('GBP')
    expect(b.bySupplier.map((g: { supplier: string, totalMinor: number }) => [g.supplier, g.totalMinor]).sort()).toEqual([[suppliers.cheap, 400], [suppliers.other, 60]].sort())
    expect(b.needs.find((n: { partId: number }) => n.partId === P.A)).toMatchObject({ short: 0, spares: 30, leftOver: 30, buy: 0 })
  })

  it('adds spares per kind beyond the stock left over, and lists parts nobody offers', async () => {
    const spares = { resistor: { perKit: 2 }, hardware: { percent: 10 } }
    const b = (await org.get(`/api/buy-list?${query({ spares })}`)).body
    // F: 5 short + 10 % of 30 = 3 spares → 8 at 12 = 96. A: 60 spares wanted, 30 left over → 30 to buy, no offer.
    expect(b.items.find((i: { partId: string }) => i.partId === String(P.F))).toMatchObject({ need: 8, qty: 8, totalMinor: 96 })
    expect(b.totalMinor).toBe(496)
    expect(b.uncovered).toEqual([{ partId: String(P.A), qty: 30, partName: `Test resistor A ${stem}` }])
    // A costs 0.10 a piece (its lot), so a rule for parts up to 0.09 leaves it out.
    const capped = (await org.get(`/api/buy-list?${query({ spares: { ...spares, resistor: { perKit: 2, maxUnitCostMinor: 9 } } })}`)).body
    expect(capped.uncovered).toEqual([])
    expect(capped.needs.find((n: { partId: number }) => n.partId === P.A)).toMatchObject({ spares: 0, buy: 0 })
  })

  it('exports CSV and a workbook grouped by supplier, with the same totals and neutralised text', async () => {
    const csvRes = await fetch(`${base}/api/buy-list/export?${query({ format: 'csv' })}`, { headers: { cookie: org.cookie } })
    expect(csvRes.status).toBe(200)
    expect(csvRes.headers.get('content-type')).toMatch(/^text\/csv/)
    const csv = await csvRes.text()
    const rows = csv.trimEnd().split('\r\n')
    expect(rows).toContain(`${suppliers.cheap} total,,,,,,,4,GBP`)
    expect(rows).toContain(`${suppliers.other} total,,,,,,,0.6,GBP`)
    expect(rows).toContain('Total,,,,,,,4.6,GBP')
    // OWASP "CSV Injection": a reference starting with = is prefixed with a quote.
    expect(csv).toContain(`${suppliers.cheap},"'=HYPERLINK(""x"")",Test crystal D ${stem},6,20,4,0.2,4,GBP`)

    const xlsxRes = await fetch(`${base}/api/buy-list/export?${query({ format: 'xlsx' })}`, { headers: { cookie: org.cookie } })
    expect(xlsxRes.status).toBe(200)
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(Buffer.from(await xlsxRes.arrayBuffer()) as never)
    const ws = wb.getWorksheet('Buy list')!
    const values: unknown[][] = []
    ws.eachRow(row => values.push((row.values as unknown[]).slice(1)))
    expect(values).toContainEqual(['Total', undefined, undefined, undefined, undefined, undefined, undefined, 4.6, 'GBP'])
    expect(values.find(v => v[2] === `Test crystal D ${stem}`)?.[1]).toBe('\'=HYPERLINK("x")')
  })
})

describe('supplier offers', () => {
  it('refuses bad offers with field messages, edits and deletes', async () => {
    const bad = await org.post('/api/supplier-offers', { partId: P.E, supplier: '', packSize: 0, breaks: [{ qty: 1, unitPriceMinor: 1.5 }] })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.data.fields).sort()).toEqual(['breaks.0.unitPriceMinor', 'packSize', 'supplier'])
    const twice = await org.post('/api/supplier-offers', { partId: P.E, supplier: 'X', breaks: [{ qty: 1, unitPriceMinor: 1 }, { qty: 1, unitPriceMinor: 2 }] })
    expect(twice.body.data.fields.breaks).toBe('Two prices for the same quantity: keep one')
    const made = await org.post('/api/supplier-offers', { partId: P.E, supplier: 'X', breaks: [{ qty: 1, unitPriceMinor: 9 }] })
    expect(made.status).toBe(201)
    const put = await org.put(`/api/supplier-offers/${made.body.id}`, { partId: P.E, supplier: 'Y', packSize: 10, breaks: [{ qty: 1, unitPriceMinor: 8 }] })
    expect(put.body).toMatchObject({ supplier: 'Y', packSize: 10 })
    const list = (await org.get(`/api/supplier-offers?partId=${P.E}`)).body
    expect(list).toMatchObject([{ supplier: 'Y', packSize: 10, breaks: [{ qty: 1, unitPriceMinor: 8 }] }])
    expect((await org.del(`/api/supplier-offers/${made.body.id}`)).status).toBe(200)
    expect((await org.del(`/api/supplier-offers/${made.body.id}`)).status).toBe(404)
  })
})
