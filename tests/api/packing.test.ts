import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { and, eq, sql } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import * as schema from '../../server/db/schema'
import { labelUrl, readScan, signCode } from '../../server/utils/codes'
import { SHEET_LAYOUTS, type SheetLayout } from '../../server/utils/labels'
import { scanSheet } from '../support/label-scan'
import { Client, DEMO, signedIn } from '../support/client'
import { demoDayId, makeBag, makeBuildDay, makePaidBag, makePaidOrder, openDb, stockLedgerMismatches, type PackDb } from './packing-data'

const base = inject('baseUrl')
const secret = inject('labelSecret')
const binToken = (code: string) => signCode('bin', code, secret)
const bagToken = (code: string) => labelUrl(base, 'bag', code, secret)

let db: PackDb
let close: () => Promise<void>
let dayId: number
let otherDayId: number
let org: Client
let pip: Client
let ruth: Client

beforeAll(async () => {
  const opened = await openDb(inject('dbUrl'))
  db = opened.db
  close = () => opened.conn.end()
  dayId = await makeBuildDay(db)
  otherDayId = await demoDayId(db)
  org = await signedIn(base, DEMO.organiser)
  pip = await signedIn(base, DEMO.packer)
  ruth = await signedIn(base, DEMO.packer2)
})
afterAll(async () => {
  await close()
})

/** Everything a refused scan must leave alone. */
async function snapshot(bagId: number) {
  const [bag] = await db.select({ state: schema.bags.state, claimedBy: schema.bags.claimedBy }).from(schema.bags).where(eq(schema.bags.id, bagId))
  const items = await db.select({ id: schema.bagItems.id, packed: schema.bagItems.qtyPacked, standIn: schema.bagItems.standInPartId }).from(schema.bagItems).where(eq(schema.bagItems.bagId, bagId)).orderBy(schema.bagItems.id)
  const [ledger] = await db.select({ n: sql<number>`count(*)` }).from(schema.ledger)
  const lots = await db.select({ id: schema.lots.id, onHand: schema.lots.onHand }).from(schema.lots).orderBy(schema.lots.id)
  const packs = await db.select({ n: sql<number>`count(*)` }).from(schema.bagEvents).where(and(eq(schema.bagEvents.bagId, bagId), eq(schema.bagEvents.kind, 'pack')))
  return { bag, items, ledger: Number(ledger!.n), lots, packs: Number(packs[0]!.n) }
}

const scan = (c: Client, text: string, extra: Record<string, unknown> = {}) => c.post('/api/pack/scan', { text, buildDayId: dayId, ...extra })

type Item = { itemId: number, designators: string, partId: number, qtyNeeded: number, qtyPacked: number, bins: string[], countSingly: boolean, standInPartId: number | null, standInWarning: string | null }
const itemsOf = (view: { pouches: { items: Item[] }[] }) => view.pouches.flatMap(p => p.items)

async function partIdByName(name: string) {
  const [p] = await db.select({ id: schema.parts.id }).from(schema.parts).where(eq(schema.parts.name, name))
  return p!.id
}

/** The station's patch of its view after a pack (the whole bag comes back only when it seals). */
function applyPacked(view: any, body: any) {
  if (body.bag) return body.bag
  for (const it of itemsOf(view)) if (it.itemId === body.item.itemId) Object.assign(it, body.item)
  view.totals = body.totals
  return view
}

/** Packs every open line of the claimed bag, taking Q-lines from `binFor` when given; returns the last response. */
async function packAll(c: Client, bagId: number, view: any, binFor: (it: Item) => string | undefined = () => undefined) {
  let last: any = null
  for (let guard = 0; guard < 400; guard++) {
    const open = itemsOf(view).find(i => i.qtyPacked < i.qtyNeeded)
    if (!open) return last
    const bin = binFor(open) ?? open.bins[0]!
    let res = await scan(c, binToken(bin), { bagId, itemId: open.itemId })
    if (res.status === 200 && res.body.outcome === 'stand-in') res = await scan(c, binToken(bin), { bagId, itemId: open.itemId, confirmStandIn: true })
    if (res.status === 200 && res.body.outcome === 'count') res = await scan(c, binToken(bin), { bagId, itemId: open.itemId, qty: res.body.qty, confirmStandIn: !!res.body.standIn })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body.outcome).toBe('packed')
    view = applyPacked(view, res.body)
    last = res
  }
  throw new Error('the bag did not finish packing')
}

describe('bags', () => {
  it('createBagForOrder makes one bag per paid order with one item per effective line, and is idempotent', async () => {
    const order = await makePaidOrder(db, { buildDayId: dayId, slug: 'wren-40', option: '40 m (7.030 MHz)' })
    const first = await makeBag(db, order.orderId)
    const again = await makeBag(db, order.orderId)
    expect(first.created).toBe(true)
    expect(again).toEqual({ id: first.id, code: first.code, created: false })
    const items = await db.select().from(schema.bagItems).where(eq(schema.bagItems.bagId, first.id))
    // Wren 40 rev A: 32 base lines plus the band set's 2 (the demo BOM in server/db/seed/data.ts).
    expect(items.length).toBe(34)
    expect(items.every(i => i.qtyPacked === 0 && i.stageId !== null)).toBe(true)
    expect(first.code).toMatch(/^B[23456789ABCDEFGHJKMNPQRSTUVWXYZ]{5}$/)
  })

  it('the organiser creates the missing bags of a build day in bulk, once', async () => {
    const day = await makeBuildDay(db)
    await makePaidOrder(db, { buildDayId: day, slug: 'tern-atu', seat: 1 })
    await makePaidOrder(db, { buildDayId: day, slug: 'linnet-20', option: 'Dummy load and indicator', seat: 2 })
    const res = await org.post('/api/bags/bulk', { buildDayId: day })
    expect(res.status).toBe(200)
    expect(res.body.created).toHaveLength(2)
    expect(res.body.failed).toEqual([])
    expect((await org.post('/api/bags/bulk', { buildDayId: day })).body.created).toHaveLength(0)
    expect((await pip.post('/api/bags/bulk', { buildDayId: day })).status).toBe(403)
    const list = await pip.get(`/api/bags?buildDayId=${day}`)
    expect(list.status).toBe(200)
    expect((await pip.get('/api/bags')).status).toBe(200)
    expect(list.body.bags.map((b: any) => b.kitName).sort()).toEqual(['Linnet 20 transmitter', 'Tern antenna tuner'])
    expect(list.body.bags.find((b: any) => b.kitName.startsWith('Linnet')).options).toEqual(['Dummy load and indicator'])
  })
})

describe('labels', () => {
  let dir: string
  beforeAll(() => { dir = mkdtempSync(join(tmpdir(), 'kw-pack-labels-')) })
  afterAll(() => rmSync(dir, { recursive: true, force: true }))

  /** Every QR text on the sheet, read label by label with pdftoppm (poppler) and zbarimg (zbar): both independent of our renderer. */
  function decodePdf(pdf: Buffer, name: string, layout: SheetLayout | string): string[] {
    return scanSheet(dir, pdf, name, typeof layout === 'string' ? SHEET_LAYOUTS.find(l => l.id === layout)! : layout)
  }

  async function pdf(path: string) {
    const res = await fetch(base + path, { headers: { cookie: org.cookie } })
    expect(res.status, await res.clone().text().catch(() => '')).toBe(200)
    expect(res.headers.get('content-type')).toBe('application/pdf')
    return Buffer.from(await res.arrayBuffer())
  }

  it('every bag and pouch label scans (zbarimg) to its bag URL, and the signature verifies', async () => {
    const a = await makePaidBag(db, { buildDayId: dayId, slug: 'wren-40', option: '80 m (3.560 MHz)' })
    const b = await makePaidBag(db, { buildDayId: dayId, slug: 'tern-atu' })
    const decoded = decodePdf(await pdf(`/api/labels/bags?codes=${a.code},${b.code}&kind=both&layout=a4-2x7`), 'bags', 'a4-2x7')
    // One bag label plus one pouch label per stage: Wren 40 has 4 stages, the Tern tuner 3.
    expect(decoded.length).toBe((1 + 4) + (1 + 3))
    expect(decoded.filter(t => t === bagToken(a.code))).toHaveLength(5)
    expect(decoded.filter(t => t === bagToken(b.code))).toHaveLength(4)
    for (const text of decoded) {
      expect(text.startsWith(`${base}/b/`)).toBe(true)
      const read = readScan(text, secret)
      expect(read).toEqual({ kind: 'bag', code: expect.stringMatching(new RegExp(`^(${a.code}|${b.code})$`)) })
    }
  })

  it('labels on a label-printer roll and on a custom US Letter sheet scan too; an impossible layout is refused', async () => {
    const a = await makePaidBag(db, { buildDayId: dayId, slug: 'linnet-20' })
    const thermal = decodePdf(await pdf(`/api/labels/bags?codes=${a.code}&kind=bags&layout=thermal-62x29`), 'thermal', 'thermal-62x29')
    expect(thermal).toEqual([bagToken(a.code)])
    const custom = decodePdf(await pdf(`/api/labels/bags?codes=${a.code}&kind=pouches&layout=custom&page=Letter&rows=5&cols=2&marginTop=12&marginLeft=5&gapX=4&gapY=2`), 'custom',
      { id: 'custom', name: 'custom', page: 'Letter', rows: 5, cols: 2, marginTopMm: 12, marginLeftMm: 5, gapXMm: 4, gapYMm: 2 })
    expect(custom).toEqual([bagToken(a.code), bagToken(a.code), bagToken(a.code)])
    const bad = await org.get(`/api/labels/bags?codes=${a.code}&layout=custom&page=A4&rows=30&cols=9`)
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/at least 30 × 20 mm/)
  })

  it('bin labels scan to their bin URL', async () => {
    const decoded = decodePdf(await pdf('/api/labels/bins?codes=A-08,E-02&layout=a4-3x8'), 'bins', 'a4-3x8')
    expect(decoded.sort()).toEqual([labelUrl(base, 'bin', 'A-08', secret), labelUrl(base, 'bin', 'E-02', secret)].sort())
    expect(decoded.map(t => readScan(t, secret))).toContainEqual({ kind: 'bin', code: 'E-02' })
  })
})

describe('the packing station refuses, and nothing changes', () => {
  let bag: Awaited<ReturnType<typeof makePaidBag>>
  beforeAll(async () => {
    bag = await makePaidBag(db, { buildDayId: dayId, slug: 'wren-40', option: '40 m (7.030 MHz)' })
  })

  it('a forged or mistyped code: 400', async () => {
    const good = signCode('bag', bag.code, secret)
    const forged = good.slice(0, -1) + (good.endsWith('A') ? 'B' : 'A')
    const before = await snapshot(bag.id)
    for (const text of [forged, `${base}/b/${forged}`, bag.code, 'hello', binToken('A-08').replace('A-08', 'A-09')]) {
      const res = await scan(pip, text, { bagId: bag.id })
      expect(res.status, text).toBe(400)
      expect(res.body.data.reason).toBe('not-a-label')
    }
    expect((await scan(pip, bag.code)).body.message).toMatch(/only the code/)
    expect(await snapshot(bag.id)).toEqual(before)
  })

  it('a bag of another build day: 409', async () => {
    const [demoBag] = await db.select().from(schema.bags).where(eq(schema.bags.buildDayId, otherDayId)).limit(1)
    const before = await snapshot(demoBag!.id)
    const res = await scan(pip, bagToken(demoBag!.code))
    expect(res.status).toBe(409)
    expect(res.body.data.reason).toBe('other-day')
    expect(res.body.message).toMatch(/Harrowmere Winter Build Day/)
    expect(await snapshot(demoBag!.id)).toEqual(before)
  })

  it('a bin before any bag: 409 asking for the bag first', async () => {
    const res = await scan(pip, binToken('A-08'))
    expect(res.status).toBe(409)
    expect(res.body.data.reason).toBe('no-bag')
  })

  it('a wrong bin, and a bin whose line is complete: 409 with the reason', async () => {
    const claim = await scan(pip, bagToken(bag.code))
    expect(claim.status).toBe(200)
    expect(claim.body.bag.bag.claim.name).toBe('Pip Achterberg')
    const before = await snapshot(bag.id)
    const wrong = await scan(pip, binToken('F-05'), { bagId: bag.id }) // UHF socket: only the Tern tuner takes it
    expect(wrong.status).toBe(409)
    expect(wrong.body.data.reason).toBe('wrong-bin')
    expect(wrong.body.message).toMatch(/UHF panel socket/)
    // The 80 m crystal is not in a 40 m bag.
    expect((await scan(pip, binToken('D-02'), { bagId: bag.id })).status).toBe(409)
    expect(await snapshot(bag.id)).toEqual(before)
    const refused = await db.select().from(schema.bagEvents).where(and(eq(schema.bagEvents.bagId, bag.id), eq(schema.bagEvents.kind, 'refused')))
    expect(refused.length).toBeGreaterThanOrEqual(2)
  })

  it('a count beyond the line: 409, and the count prompt records nothing', async () => {
    const before = await snapshot(bag.id)
    const prompt = await scan(pip, binToken('A-09'), { bagId: bag.id }) // R4-R6, 3 × 10 kΩ
    expect(prompt.status).toBe(200)
    expect(prompt.body).toMatchObject({ outcome: 'count', qty: 3, binCode: 'A-09', item: { designators: 'R4-R6' } })
    const over = await scan(pip, binToken('A-09'), { bagId: bag.id, qty: 4 })
    expect(over.status).toBe(409)
    expect(over.body.data.reason).toBe('over-count')
    expect(await snapshot(bag.id)).toEqual(before)
  })

  it('two packers on one bag: the second is refused with 423 until the claim lapses', async () => {
    const before = await snapshot(bag.id)
    const other = await scan(ruth, bagToken(bag.code))
    expect(other.status).toBe(423)
    expect(other.body.data.reason).toBe('claimed')
    expect(other.body.message).toMatch(/Pip Achterberg is packing/)
    const bin = await scan(ruth, binToken('A-09'), { bagId: bag.id, qty: 1 })
    expect(bin.status).toBe(423)
    expect((await ruth.post('/api/pack/undo', { bagId: bag.id })).status).toBe(423)
    expect(await snapshot(bag.id)).toEqual(before)
    // After ten quiet minutes the claim lapses (moved back in time here) and Ruth may take the bag.
    await db.update(schema.bags).set({ claimedAt: sql`now() - interval 11 minute` }).where(eq(schema.bags.id, bag.id))
    const taken = await scan(ruth, bagToken(bag.code))
    expect(taken.status).toBe(200)
    expect(taken.body.bag.bag.claim.name).toBe('Ruth Ellingworth')
    expect((await scan(pip, binToken('A-09'), { bagId: bag.id, qty: 1 })).status).toBe(423)
  })

  it('a packer holds one bag at a time: claiming another lets go of the first, and "done for now" lets go of it', async () => {
    const magnus = await signedIn(base, 'magnus.teale@club.invalid')
    const [magnusId] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, 'magnus.teale@club.invalid'))
    const begun = await makePaidBag(db, { buildDayId: dayId, slug: 'tern-atu' })
    const untouched = await makePaidBag(db, { buildDayId: dayId, slug: 'tern-atu' })
    const last = await makePaidBag(db, { buildDayId: dayId, slug: 'tern-atu' })
    const stateOf = async (id: number) => (await db.select({ state: schema.bags.state, claimedBy: schema.bags.claimedBy }).from(schema.bags).where(eq(schema.bags.id, id)))[0]
    const first = await scan(magnus, bagToken(begun.code))
    expect(first.status).toBe(200)
    const open = itemsOf(first.body.bag).find(i => i.qtyPacked < i.qtyNeeded)!
    const one = await scan(magnus, binToken(open.bins[0]!), { bagId: begun.id, itemId: open.itemId, qty: 1, confirmStandIn: true })
    expect(one.body.outcome).toBe('packed')
    expect((await scan(magnus, bagToken(untouched.code))).status).toBe(200)
    expect(await stateOf(begun.id)).toEqual({ state: 'packing', claimedBy: null })
    expect(await stateOf(untouched.id)).toEqual({ state: 'packing', claimedBy: magnusId!.id })
    expect((await scan(magnus, bagToken(last.code))).status).toBe(200)
    // Let go with nothing in it: back to "not started".
    expect(await stateOf(untouched.id)).toEqual({ state: 'open', claimedBy: null })
    expect(await stateOf(begun.id)).toEqual({ state: 'packing', claimedBy: null })
    const done = await magnus.post(`/api/bags/${last.code}/release`)
    expect(done.status).toBe(200)
    expect(done.body.bag).toMatchObject({ state: 'open', claim: null })
    expect(await stateOf(last.id)).toEqual({ state: 'open', claimedBy: null })
  })

  it('only one of two packers claiming a bag at the same moment gets it', async () => {
    const fresh = await makePaidBag(db, { buildDayId: dayId, slug: 'tern-atu' })
    const results = await Promise.all([scan(pip, bagToken(fresh.code)), scan(ruth, bagToken(fresh.code))])
    expect(results.map(r => r.status).sort()).toEqual([200, 423])
  })

  it('concurrent scans of one line never count past it (guarded update)', async () => {
    const fresh = await makePaidBag(db, { buildDayId: dayId, slug: 'wren-40', option: '40 m (7.030 MHz)' })
    expect((await scan(pip, bagToken(fresh.code))).status).toBe(200)
    // HW2: 4 × M3 screw and nut from bin G-02; ten packs of 1 fired at once.
    const [hw2] = await db.select({ id: schema.bagItems.id }).from(schema.bagItems).innerJoin(schema.bomLines, eq(schema.bomLines.id, schema.bagItems.lineId))
      .where(and(eq(schema.bagItems.bagId, fresh.id), eq(schema.bomLines.designators, 'HW2')))
    const results = await Promise.all(Array.from({ length: 10 }, () => scan(pip, binToken('G-02'), { bagId: fresh.id, itemId: hw2!.id, qty: 1 })))
    expect(results.filter(r => r.status === 200)).toHaveLength(4)
    expect(results.filter(r => r.status === 409)).toHaveLength(6)
    const [item] = await db.select().from(schema.bagItems).where(eq(schema.bagItems.id, hw2!.id))
    expect(item!.qtyPacked).toBe(4)
    const packs = await db.select().from(schema.bagEvents).where(and(eq(schema.bagEvents.bagItemId, hw2!.id), eq(schema.bagEvents.kind, 'pack')))
    expect(packs.reduce((n, e) => n + (e.qty ?? 0), 0)).toBe(4)
  })
})

describe('packing a whole bag', () => {
  let bag: Awaited<ReturnType<typeof makePaidBag>>
  let ledgerBefore: number

  it('packs every line with one stand-in, seals, writes the picks, consumes the reservations', async () => {
    bag = await makePaidBag(db, { buildDayId: dayId, slug: 'wren-40', option: '40 m (7.030 MHz)' })
    const npnEbc = await partIdByName('NPN small-signal transistor, EBC')
    const npnCbe = await partIdByName('NPN small-signal transistor, CBE')
    const [{ n }] = await db.select({ n: sql<number>`count(*)` }).from(schema.ledger) as [{ n: number }]
    ledgerBefore = Number(n)
    const claim = await scan(pip, bagToken(bag.code))
    expect(claim.status).toBe(200)

    // The stand-in asks once, records nothing until confirmed.
    const q1 = itemsOf(claim.body.bag).find(i => i.designators === 'Q1')!
    expect(q1.partId).toBe(npnEbc)
    const ask = await scan(pip, binToken('E-02'), { bagId: bag.id })
    expect(ask.status).toBe(200)
    expect(ask.body).toMatchObject({ outcome: 'stand-in', partId: npnCbe, item: { designators: 'Q1' } })
    expect(ask.body.standIn.warning).toMatch(/Pinout differs/)
    expect((await snapshot(bag.id)).packs).toBe(0)

    const last = await packAll(pip, bag.id, claim.body.bag, it => (it.designators === 'Q1' ? 'E-02' : undefined))
    expect(last.body.sealed).toBe(true)
    expect(last.body.sealError).toBeNull()
    expect(last.body.bag.bag.state).toBe('sealed')

    const items = await db.select().from(schema.bagItems).where(eq(schema.bagItems.bagId, bag.id))
    expect(items.every(i => i.qtyPacked === i.qtyNeeded)).toBe(true)
    const q1Row = items.find(i => i.id === q1.itemId)!
    expect(q1Row.standInPartId).toBe(npnCbe)
    expect(q1Row.standInWarning).toMatch(/turn it 180°/)

    // The ledger's picks for the bag equal what was packed, lot by lot, and every lot equals its ledger.
    const picks = await db.select().from(schema.ledger).where(eq(schema.ledger.bagId, bag.id))
    expect(picks.every(p => p.kind === 'pick' && p.qty < 0)).toBe(true)
    expect(-picks.reduce((s, p) => s + p.qty, 0)).toBe(items.reduce((s, i) => s + i.qtyNeeded, 0))
    expect(picks.find(p => p.partId === npnCbe)?.qty).toBe(-1)
    expect(picks.find(p => p.partId === npnEbc)).toBeUndefined()
    expect(await stockLedgerMismatches(db)).toEqual([])
    const res = await db.select().from(schema.reservations).where(eq(schema.reservations.orderId, bag.orderId))
    expect(res.every(r => r.state === 'consumed')).toBe(true)
    const seals = await db.select().from(schema.bagEvents).where(and(eq(schema.bagEvents.bagId, bag.id), eq(schema.bagEvents.kind, 'seal')))
    expect(seals).toHaveLength(1)
  })

  it('a sealed bag refuses scans (409) and changes nothing', async () => {
    const before = await snapshot(bag.id)
    const again = await scan(pip, bagToken(bag.code))
    expect(again.status).toBe(409)
    expect(again.body.data.reason).toBe('sealed')
    const bin = await scan(pip, binToken('A-09'), { bagId: bag.id, qty: 1 })
    expect(bin.status).toBe(409)
    expect(bin.body.data.reason).toBe('sealed')
    expect((await pip.post('/api/pack/undo', { bagId: bag.id })).status).toBe(409)
    expect(await snapshot(bag.id)).toEqual(before)
  })

  it('the bag page shows its history with packer and time', async () => {
    const res = await org.get(`/api/bags/${bag.code}`)
    expect(res.status).toBe(200)
    const kinds = res.body.history.map((h: any) => h.kind).filter((k: string) => k !== 'refused')
    expect(kinds[0]).toBe('seal')
    expect(kinds).toContain('claim')
    expect(kinds.filter((k: string) => k === 'pack').length).toBeGreaterThanOrEqual(34)
    expect(res.body.history.every((h: any) => h.who === 'Pip Achterberg' && !Number.isNaN(Date.parse(h.at)))).toBe(true)
  })

  it('only an organiser unseals, with a reason; the stock comes back through the ledger and the bag can be sealed again', async () => {
    expect((await pip.post(`/api/bags/${bag.code}/unseal`, { reason: 'wrong part' })).status).toBe(403)
    expect((await org.post(`/api/bags/${bag.code}/unseal`, { reason: '' })).status).toBe(400)
    const res = await org.post(`/api/bags/${bag.code}/unseal`, { reason: 'Builder asked for the 80 m crystal' })
    expect(res.status).toBe(200)
    expect(res.body.bag.state).toBe('packing')
    const rows = await db.select().from(schema.ledger).where(eq(schema.ledger.bagId, bag.id))
    expect(rows.filter(r => r.kind === 'return').reduce((s, r) => s + r.qty, 0)).toBe(-rows.filter(r => r.kind === 'pick').reduce((s, r) => s + r.qty, 0))
    expect(await stockLedgerMismatches(db)).toEqual([])
    const res2 = await db.select().from(schema.reservations).where(eq(schema.reservations.orderId, bag.orderId))
    expect(res2.every(r => r.state === 'confirmed')).toBe(true)
    const audit = await db.select().from(schema.auditLog).where(and(eq(schema.auditLog.action, 'bag.unseal'), eq(schema.auditLog.subjectId, String(bag.id))))
    expect(audit[0]!.detail).toMatchObject({ reason: 'Builder asked for the 80 m crystal' })
    expect((await org.post(`/api/bags/${bag.code}/unseal`, { reason: 'twice' })).status).toBe(409)

    const sealed = await pip.post(`/api/bags/${bag.code}/seal`)
    expect(sealed.status).toBe(200)
    expect(sealed.body.bag.state).toBe('sealed')
    expect(await stockLedgerMismatches(db)).toEqual([])
    const [{ n }] = await db.select({ n: sql<number>`count(*)` }).from(schema.ledger) as [{ n: number }]
    expect(Number(n)).toBeGreaterThan(ledgerBefore)
  })
})

describe('undo, release, pick lists and progress', () => {
  it('undo takes back the last scan, then the one before; with nothing left it is refused', async () => {
    const bag = await makePaidBag(db, { buildDayId: dayId, slug: 'wren-40', option: '40 m (7.030 MHz)' })
    await scan(pip, bagToken(bag.code))
    expect((await scan(pip, binToken('E-02'), { bagId: bag.id, confirmStandIn: true })).body.outcome).toBe('packed')
    expect((await scan(pip, binToken('A-08'), { bagId: bag.id, qty: 2 })).body.outcome).toBe('packed')
    const u1 = await pip.post('/api/pack/undo', { bagId: bag.id })
    expect(u1.status).toBe(200)
    expect(itemsOf(u1.body).find(i => i.designators === 'R2, R3')!.qtyPacked).toBe(0)
    const u2 = await pip.post('/api/pack/undo', { bagId: bag.id })
    const q1 = itemsOf(u2.body).find(i => i.designators === 'Q1')!
    expect(q1.qtyPacked).toBe(0)
    expect(q1.standInPartId).toBeNull()
    const u3 = await pip.post('/api/pack/undo', { bagId: bag.id })
    expect(u3.status).toBe(409)
    expect(u3.body.data.reason).toBe('nothing-to-undo')
    const events = await db.select().from(schema.bagEvents).where(eq(schema.bagEvents.bagId, bag.id))
    expect(events.filter(e => e.kind === 'undo')).toHaveLength(2)
    expect(events.filter(e => e.kind === 'pack').every(e => e.undone === 1)).toBe(true)
    const released = await pip.post(`/api/bags/${bag.code}/release`)
    expect(released.body.bag.state).toBe('open')
    expect(released.body.bag.claim).toBeNull()
  })

  it('a pick list walks the bins in order and uses the reserved stand-in with its warning', async () => {
    const order = await makePaidOrder(db, { buildDayId: dayId, slug: 'wren-40', option: '40 m (7.030 MHz)' })
    const bag = await makeBag(db, order.orderId)
    const npnCbe = await partIdByName('NPN small-signal transistor, CBE')
    const [q1] = await db.select({ lineId: schema.bagItems.lineId }).from(schema.bagItems).innerJoin(schema.bomLines, eq(schema.bomLines.id, schema.bagItems.lineId))
      .where(and(eq(schema.bagItems.bagId, bag.id), eq(schema.bomLines.designators, 'Q1')))
    await db.update(schema.reservations).set({ partId: npnCbe }).where(and(eq(schema.reservations.orderId, order.orderId), eq(schema.reservations.lineId, q1!.lineId)))
    const res = await pip.get(`/api/pick-lists/${bag.code}`)
    expect(res.status).toBe(200)
    const rows = res.body.rows as any[]
    const walk = rows.map(r => r.walkOrder)
    expect(walk).toEqual([...walk].sort((a, b) => a - b))
    // A 40 m Wren 40 holds 51 parts (9 + 16 + 15 + 11 by stage, counted by hand from server/db/seed/data.ts).
    expect(rows.reduce((n, r) => n + r.qty, 0)).toBe(51)
    expect(rows.every(r => r.short === 0)).toBe(true)
    const q1Row = rows.find(r => r.designators === 'Q1')
    expect(q1Row).toMatchObject({ binCode: 'E-02', standIn: true })
    expect(q1Row.warning).toMatch(/Pinout differs/)
    expect(rows.find(r => r.designators === 'R2, R3')).toMatchObject({ binCode: 'A-08', qty: 2, standIn: false })
  })

  it('the batch pick list says what goes into each of which bags', async () => {
    const day = await makeBuildDay(db)
    for (let seat = 1; seat <= 3; seat++) await makePaidBag(db, { buildDayId: day, slug: 'wren-40', option: seat === 3 ? '80 m (3.560 MHz)' : '40 m (7.030 MHz)', seat })
    const res = await pip.get(`/api/pick-lists?buildDayId=${day}`)
    expect(res.status).toBe(200)
    const r47k = res.body.lines.find((l: any) => l.binCode === 'A-08')
    expect(r47k).toMatchObject({ qty: 2, bagNumbers: '1–3', partName: 'Resistor 4.7 kΩ' })
    const x40 = res.body.lines.find((l: any) => l.partName === 'Crystal 7.030 MHz')
    expect(x40.bagNumbers).toBe('1–2')
    expect(res.body.lines.find((l: any) => l.partName === 'Crystal 3.560 MHz').bagNumbers).toBe('3')
  })

  it('the progress board counts bags per build day', async () => {
    const day = await makeBuildDay(db)
    const a = await makePaidBag(db, { buildDayId: day, slug: 'tern-atu' })
    await makePaidBag(db, { buildDayId: day, slug: 'tern-atu' })
    await makePaidOrder(db, { buildDayId: day, slug: 'tern-atu' })
    const before = (await pip.get('/api/pack/progress')).body.days.find((d: any) => d.id === day)
    expect(before).toMatchObject({ notStarted: 2, inProgress: 0, sealed: 0, total: 2, paidWithoutBag: 1 })
    await pip.post('/api/pack/scan', { text: bagToken(a.code), buildDayId: day })
    const during = (await org.get('/api/pack/progress')).body.days.find((d: any) => d.id === day)
    expect(during).toMatchObject({ notStarted: 1, inProgress: 1, sealed: 0 })
    expect(during.packing[0]).toMatchObject({ code: a.code, packer: 'Pip Achterberg', packed: 0 })
    expect((await new Client(base).get('/api/pack/progress')).status).toBe(401)
  })

  it('a bag QR link sends a packer to the station and refuses a forged link', async () => {
    const bag = await makePaidBag(db, { buildDayId: dayId, slug: 'tern-atu' })
    const token = signCode('bag', bag.code, secret)
    const res = await fetch(`${base}/b/${token}`, { headers: { cookie: pip.cookie }, redirect: 'manual' })
    expect(res.status).toBe(302)
    expect(res.headers.get('location')).toBe(`/pack?scan=${token}`)
    const org302 = await fetch(`${base}/b/${token}`, { headers: { cookie: (await signedIn(base, DEMO.organiser2)).cookie }, redirect: 'manual' })
    expect(org302.headers.get('location')).toBe(`/bags/${bag.code}`)
    const forged = await fetch(`${base}/b/${token.slice(0, -2)}ZZ`, { redirect: 'manual' })
    expect(forged.status).toBe(400)
    expect(await forged.text()).toMatch(/refused/)
  })
})

describe('inputs', () => {
  it('rejects bad scan bodies with per-field messages', async () => {
    const res = await pip.post('/api/pack/scan', { text: 'x', buildDayId: dayId, qty: 0 })
    expect(res.status).toBe(400)
    expect(res.body.data.fields.qty).toEqual(expect.stringMatching(/\w/))
    const missing = await pip.post('/api/pack/scan', { buildDayId: dayId })
    expect(missing.status).toBe(400)
    expect(missing.body.data.fields.text).toEqual(expect.stringMatching(/\w/))
  })
})
