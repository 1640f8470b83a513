import { randomBytes } from 'node:crypto'
import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2'
import { eq, sql } from 'drizzle-orm'
import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import * as schema from '../../server/db/schema'
import { checkStockInvariants } from '../../server/utils/stock'
import { labelUrl, newBagCode, signCode } from '../../server/utils/codes'
import { type Client, DEMO, signedIn } from '../support/client'

const base = inject('baseUrl')
const secret = inject('labelSecret')
// Bin codes of this run: 1–16 characters, so a short random stem.
const stem = `T${randomBytes(3).toString('hex').toUpperCase().slice(0, 4)}`

let pool: mysql.Pool
let db: MySql2Database<typeof schema>
let org: Client
let partId: number
const bins: Record<string, number> = {}

async function makeBin(code: string) {
  const res = await org.post('/api/bins', { code, place: `Test shelf ${code}`, walkOrder: 5 })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  bins[code] = res.body.id
  return res.body.id as number
}

async function receive(binCode: string, qty: number, extra: Record<string, unknown> = {}) {
  const res = await org.post('/api/lots', {
    bin: binCode, partId, qty, unitCostMinor: 7, currency: 'GBP', supplier: 'Test Supplies', supplierRef: 'TS-1',
    receivedOn: '2026-12-01', note: 'test receipt', ...extra,
  })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body.id as number
}

async function lot(id: number) {
  const [row] = await db.select().from(schema.lots).where(eq(schema.lots.id, id))
  return row!
}

async function ledgerSum(lotId: number) {
  const [row] = await db.select({ n: sql<number>`cast(coalesce(sum(${schema.ledger.qty}), 0) as signed)` }).from(schema.ledger).where(eq(schema.ledger.lotId, lotId))
  return Number(row!.n)
}

beforeAll(async () => {
  pool = mysql.createPool({ uri: inject('dbUrl'), timezone: 'Z', dateStrings: ['DATE'], connectionLimit: 4 })
  db = drizzle(pool, { schema, mode: 'default' })
  org = await signedIn(base, DEMO.organiser)
  const [p] = await db.insert(schema.parts).values({ kind: 'resistor', name: `Test resistor 3.3 kΩ ${stem}`, value: 3300, unit: 'Ω', valueText: '3.3 kΩ' }).$returningId()
  partId = p!.id
  for (const code of ['A', 'B', 'C']) await makeBin(`${stem}-${code}`)
})

afterAll(async () => {
  await pool.end()
})

describe('bins', () => {
  it('refuses a duplicate code with 409 and a malformed one with a field message', async () => {
    const dup = await org.post('/api/bins', { code: `${stem}-a`, place: 'again' })
    expect(dup.status).toBe(409)
    expect(dup.body.message).toBe(`There is already a bin ${stem}-A`)
    const bad = await org.post('/api/bins', { code: 'A 03!', walkOrder: -1 })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.data.fields).sort()).toEqual(['code', 'walkOrder'])
    // A code that would read as CODE-SIGNATURE cannot be a bin code.
    expect((await org.post('/api/bins', { code: 'X-ABCDEFGH' })).status).toBe(400)
  })

  it('lists bins with their stock and changes place and walk order', async () => {
    const id = bins[`${stem}-C`]!
    const res = await org.patch(`/api/bins/${id}`, { place: 'Under the stage', walkOrder: 7 })
    expect(res.status).toBe(200)
    const list = await org.get('/api/bins')
    expect(list.body.find((b: { id: number }) => b.id === id)).toMatchObject({ code: `${stem}-C`, place: 'Under the stage', walkOrder: 7, onHand: 0 })
  })

  it('prints a bin label as a PDF on its own', async () => {
    const res = await fetch(`${base}/api/bins/${bins[`${stem}-A`]}/label`, { headers: { cookie: org.cookie } })
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toBe('application/pdf')
    expect(res.headers.get('content-disposition')).toContain(`bin-${stem}-A.pdf`)
    expect(Buffer.from(await res.arrayBuffer()).subarray(0, 5).toString('latin1')).toBe('%PDF-')
  })

  it('reads a scanned label URL, a bare token and a typed code; refuses forgeries, bag labels and unknown bins', async () => {
    const code = `${stem}-A`
    for (const text of [labelUrl('http://hall.invalid', 'bin', code, secret), signCode('bin', code, secret), code.toLowerCase()]) {
      const res = await org.post('/api/bins/scan', { text })
      expect(res.status, text).toBe(200)
      expect(res.body.code).toBe(code)
    }
    const forged = await org.post('/api/bins/scan', { text: `${code}-22222222` })
    expect(forged.status).toBe(400)
    expect(forged.body.message).toMatch(/signature does not match/)
    const bag = await org.post('/api/bins/scan', { text: signCode('bag', newBagCode(), secret) })
    expect(bag.status).toBe(400)
    expect(bag.body.message).toMatch(/bag label, not a bin label/)
    const unknown = await org.post('/api/bins/scan', { text: signCode('bin', `${stem}-ZZ`, secret) })
    expect(unknown.status).toBe(404)
    expect(unknown.body.message).toBe(`There is no bin ${stem}-ZZ: add it on the Bins page first`)
  })
})

describe('receiving', () => {
  it('makes a lot and its receive row from a scanned bin label', async () => {
    const id = await receive(labelUrl(base, 'bin', `${stem}-A`, secret), 40)
    const l = await lot(id)
    expect(l).toMatchObject({ binId: bins[`${stem}-A`], partId, qtyReceived: 40, onHand: 40, unitCostMinor: 7, supplier: 'Test Supplies', receivedOn: '2026-12-01' })
    const rows = await db.select().from(schema.ledger).where(eq(schema.ledger.lotId, id))
    expect(rows.map(r => [r.kind, r.qty])).toEqual([['receive', 40]])
    expect(rows[0]!.userId).not.toBeNull()
  })

  it('refuses negative and fractional quantities, fractional costs, unknown parts and unknown bins', async () => {
    const body = { bin: `${stem}-A`, partId, qty: 5, unitCostMinor: 7, receivedOn: '2026-12-01' }
    const neg = await org.post('/api/lots', { ...body, qty: -5 })
    expect(neg.status).toBe(400)
    expect(neg.body.data.fields.qty).toBe('Receive 1 or more')
    const frac = await org.post('/api/lots', { ...body, qty: 2.5, unitCostMinor: 7.5 })
    expect(frac.status).toBe(400)
    expect(frac.body.data.fields).toMatchObject({ qty: 'Quantities are whole numbers', unitCostMinor: 'Give the cost in whole minor units (pence, cents)' })
    const part = await org.post('/api/lots', { ...body, partId: 99_999_999 })
    expect(part.status).toBe(400)
    expect(part.body.message).toBe('There is no part 99999999 in the catalogue')
    const bin = await org.post('/api/lots', { ...body, bin: `${stem}-NOPE` })
    expect(bin.status).toBe(404)
    expect(bin.body.message).toMatch(/There is no bin .*-NOPE/)
  })
})

describe('moving stock', () => {
  it('moves into a new lot in the target bin, then reuses that lot', async () => {
    const src = await receive(`${stem}-A`, 20)
    const first = await org.post(`/api/lots/${src}/move`, { toBin: signCode('bin', `${stem}-B`, secret), qty: 5, reason: 'tidy' })
    expect(first.status, JSON.stringify(first.body)).toBe(200)
    const second = await org.post(`/api/lots/${src}/move`, { toBin: `${stem}-B`, qty: 3 })
    expect(second.body.toLotId).toBe(first.body.toLotId)
    const target = await lot(first.body.toLotId)
    expect(target).toMatchObject({ binId: bins[`${stem}-B`], partId, onHand: 8, qtyReceived: 0, unitCostMinor: 7, supplier: 'Test Supplies', receivedOn: '2026-12-01' })
    expect((await lot(src)).onHand).toBe(12)
    const rows = await db.select().from(schema.ledger).where(eq(schema.ledger.lotId, src))
    expect(rows.map(r => [r.kind, r.qty])).toEqual([['receive', 20], ['move-out', -5], ['move-out', -3]])
  })

  it('refuses a move beyond stock with 409 and changes nothing', async () => {
    const src = await receive(`${stem}-A`, 4)
    const res = await org.post(`/api/lots/${src}/move`, { toBin: `${stem}-B`, qty: 5 })
    expect(res.status).toBe(409)
    expect(res.body.message).toBe(`Bin ${stem}-A holds only 4 of lot ${src}; 5 were asked for`)
    expect((await lot(src)).onHand).toBe(4)
    expect(await ledgerSum(src)).toBe(4)
    expect((await org.post(`/api/lots/${src}/move`, { toBin: `${stem}-A`, qty: 1 })).status).toBe(400)
    expect((await org.post(`/api/lots/${src}/move`, { toBin: `${stem}-B`, qty: 0.5 })).status).toBe(400)
    expect((await org.post(`/api/lots/${src}/move`, { toBin: `${stem}-B`, qty: -1 })).status).toBe(400)
    expect((await org.post('/api/lots/99999999/move', { toBin: `${stem}-B`, qty: 1 })).status).toBe(404)
  })

  it('50 concurrent moves of one lot never take it below zero, and every lot equals its ledger sum', async () => {
    const src = await receive(`${stem}-A`, 30)
    const sizes = Array.from({ length: 50 }, (_, i) => 1 + (i % 3))
    const results = await Promise.all(sizes.map((qty, i) =>
      org.post(`/api/lots/${src}/move`, { toBin: i % 2 ? `${stem}-B` : `${stem}-C`, qty, reason: `race ${i}` })))
    const statuses = results.map(r => r.status)
    expect(statuses.every(s => s === 200 || s === 409), JSON.stringify(results.filter(r => r.status !== 200 && r.status !== 409).map(r => r.body))).toBe(true)
    const moved = results.reduce((n, r, i) => n + (r.status === 200 ? sizes[i]! : 0), 0)
    expect(moved).toBeLessThanOrEqual(30)
    // Moves of 1 still fit until the lot is empty, so the lot ends with less than the smallest failed move.
    const left = (await lot(src)).onHand
    expect(left).toBe(30 - moved)
    const failed = sizes.filter((_, i) => results[i]!.status === 409)
    if (failed.length) expect(left).toBeLessThan(Math.min(...failed))
    expect(await ledgerSum(src)).toBe(left)
    const outs = await db.select().from(schema.ledger).where(eq(schema.ledger.lotId, src))
    expect(outs.filter(r => r.kind === 'move-out').length).toBe(statuses.filter(s => s === 200).length)
    expect(await checkStockInvariants(db)).toEqual([])
  })

  it('moves crossing between two bins at once all finish (lock waits retried) and stay consistent', async () => {
    const a = await receive(`${stem}-A`, 15, { supplierRef: 'TS-X' })
    const b = await receive(`${stem}-B`, 15, { supplierRef: 'TS-X' })
    const results = await Promise.all(Array.from({ length: 30 }, (_, i) =>
      i % 2 ? org.post(`/api/lots/${a}/move`, { toBin: `${stem}-B`, qty: 1 }) : org.post(`/api/lots/${b}/move`, { toBin: `${stem}-A`, qty: 1 })))
    expect(results.map(r => r.status).filter(s => s !== 200 && s !== 409), JSON.stringify(results.map(r => r.body))).toEqual([])
    const lots = await db.select().from(schema.lots).where(eq(schema.lots.supplierRef, 'TS-X'))
    expect(lots.reduce((n, l) => n + l.onHand, 0)).toBe(30)
    expect(await checkStockInvariants(db)).toEqual([])
  })

  it('the invariant check notices a lot whose on-hand drifts from its ledger', async () => {
    const id = await receive(`${stem}-C`, 3)
    await db.update(schema.lots).set({ onHand: 5 }).where(eq(schema.lots.id, id))
    try {
      expect(await checkStockInvariants(db)).toEqual([`Lot ${id} says 5 on hand but its ledger adds up to 3`])
    }
    finally {
      await db.update(schema.lots).set({ onHand: 3 }).where(eq(schema.lots.id, id))
    }
    expect(await checkStockInvariants(db)).toEqual([])
  })
})

describe('scrap, returns and spares hand-outs', () => {
  it('records each as one signed ledger row with who and why', async () => {
    const id = await receive(`${stem}-C`, 10)
    expect((await org.post('/api/ledger', { lotId: id, kind: 'scrap', qty: 2, reason: 'bent leads' })).body).toMatchObject({ qty: -2, onHand: 8 })
    expect((await org.post('/api/ledger', { lotId: id, kind: 'spares', qty: 1, reason: 'spares desk' })).body).toMatchObject({ qty: -1, onHand: 7 })
    expect((await org.post('/api/ledger', { lotId: id, kind: 'return', qty: 3, reason: 'unused from a bag' })).body).toMatchObject({ qty: 3, onHand: 10 })
    const over = await org.post('/api/ledger', { lotId: id, kind: 'scrap', qty: 11, reason: 'too many' })
    expect(over.status).toBe(409)
    expect((await org.post('/api/ledger', { lotId: id, kind: 'scrap', qty: 1, reason: '' })).body.data.fields.reason).toBe('Say why, in a few words')
    expect((await org.post('/api/ledger', { lotId: id, kind: 'pick', qty: 1, reason: 'not by hand' })).status).toBe(400)
    const rows = (await org.get(`/api/ledger?lotId=${id}`)).body as { kind: string, qty: number, reason: string, userName: string }[]
    expect(rows.map(r => [r.kind, r.qty])).toEqual([['return', 3], ['spares', -1], ['scrap', -2], ['receive', 10]])
    expect(rows[0]!.userName).toBe('Olwen Hartley')
  })

  it('filters the ledger by bin, part, kind and date', async () => {
    const binId = bins[`${stem}-B`]!
    const rows = (await org.get(`/api/ledger?binId=${binId}&kind=move-in&partId=${partId}`)).body as { binId: number, kind: string, partId: number }[]
    expect(rows.length).toBeGreaterThan(0)
    expect(rows.every(r => r.binId === binId && r.kind === 'move-in' && r.partId === partId)).toBe(true)
    expect((await org.get(`/api/ledger?binId=${binId}&from=2000-01-01&to=2000-01-02`)).body).toEqual([])
    expect((await org.get('/api/ledger?kind=borrow')).status).toBe(400)
  })
})

describe('count sheets', () => {
  it('turns counted quantities into adjustment rows with the reason, and refuses a stale sheet', async () => {
    const binId = await makeBin(`${stem}-D`)
    const a = await receive(`${stem}-D`, 12)
    const b = await receive(`${stem}-D`, 6)
    const sheet = (await org.get(`/api/counts/${binId}`)).body
    expect(sheet.lots.map((l: { lotId: number, onHand: number }) => [l.lotId, l.onHand]).sort()).toEqual([[a, 12], [b, 6]].sort())
    const noReason = await org.post(`/api/counts/${binId}`, { counts: [{ lotId: a, expected: 12, counted: 11 }] })
    expect(noReason.status).toBe(400)
    const res = await org.post(`/api/counts/${binId}`, { reason: 'stocktake', counts: [{ lotId: a, expected: 12, counted: 11 }, { lotId: b, expected: 6, counted: 6 }] })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body.adjustments).toEqual([{ lotId: a, from: 12, to: 11, qty: -1 }])
    const [row] = await db.select().from(schema.ledger).where(eq(schema.ledger.lotId, a)).orderBy(sql`${schema.ledger.id} desc`).limit(1)
    expect(row).toMatchObject({ kind: 'count', qty: -1, reason: 'stocktake' })
    const stale = await org.post(`/api/counts/${binId}`, { reason: 'again', counts: [{ lotId: a, expected: 12, counted: 15 }] })
    expect(stale.status).toBe(409)
    expect(stale.body.message).toMatch(/the sheet showed 12, the ledger now says 11/)
    const other = await org.post(`/api/counts/${binId}`, { reason: 'wrong bin', counts: [{ lotId: (await receive(`${stem}-A`, 1)), expected: 1, counted: 0 }] })
    expect(other.status).toBe(400)
    expect((await org.post(`/api/counts/${binId}`, { reason: 'neg', counts: [{ lotId: b, expected: 6, counted: -1 }] })).status).toBe(400)
  })

  it('keeps a bin that has held stock', async () => {
    const res = await org.del(`/api/bins/${bins[`${stem}-D`]}`)
    expect(res.status).toBe(409)
    const empty = await makeBin(`${stem}-E`)
    expect((await org.del(`/api/bins/${empty}`)).status).toBe(200)
  })
})

describe('lots table', () => {
  it('filters lots by part and bin and hides empty lots unless asked', async () => {
    const binId = bins[`${stem}-A`]!
    const inStock = (await org.get(`/api/lots?partId=${partId}&binId=${binId}`)).body as { onHand: number, binCode: string }[]
    expect(inStock.length).toBeGreaterThan(0)
    expect(inStock.every(l => l.onHand > 0 && l.binCode === `${stem}-A`)).toBe(true)
    const all = (await org.get(`/api/lots?partId=${partId}&stock=all`)).body as unknown[]
    expect(all.length).toBeGreaterThanOrEqual(inStock.length)
  })
})
