// My kit (orders, bag contents, workbook), collection at the door and rework after a revision.
import ExcelJS from 'exceljs'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { signCode } from '../../server/utils/codes'
import { Client, DEMO, signedIn } from '../support/client'
import { and, eq, lotOnHand, makeBag, makeBuilder, makeKitScenario, onHandByPart, openDb, releaseRevisionB, schema, type BuildersDb, type KitScenario } from './builders-fixtures'

const base = inject('baseUrl')
const labelSecret = inject('labelSecret')

let db: BuildersDb
let close: () => Promise<void>
let kit: KitScenario
let ann: { id: number, email: string, name: string }
let ben: { id: number, email: string, name: string }
let annBag: { orderId: number, bagId: number, code: string }
let benBag: { orderId: number, bagId: number, code: string }
let asAnn: Client
let asBen: Client

beforeAll(async () => {
  const opened = await openDb(inject('dbUrl'))
  db = opened.db
  close = () => opened.conn.end()
  kit = await makeKitScenario(db, { transmits: true })
  ann = await makeBuilder(db, 'Ann Builder')
  ben = await makeBuilder(db, 'Ben Builder')
  annBag = await makeBag(db, kit, ann.id, { seat: 31 })
  benBag = await makeBag(db, kit, ben.id, { seat: 32, state: 'open' })
  asAnn = await signedIn(base, ann.email)
  asBen = await signedIn(base, ben.email)
})
afterAll(async () => close?.())

describe('my kit', () => {
  it('lists only my own orders, with the state my bag has reached', async () => {
    const mine = await asAnn.get('/api/my/orders')
    expect(mine.status).toBe(200)
    expect(mine.body.orders).toHaveLength(1)
    expect(mine.body.orders[0]).toMatchObject({ id: annBag.orderId, status: 'sealed', seat: 31, kit: { name: kit.kitName, transmits: true }, bag: { id: annBag.bagId, code: annBag.code } })
    const his = await asBen.get('/api/my/orders')
    expect(his.body.orders.map((o: { id: number }) => o.id)).toEqual([benBag.orderId])
    expect(his.body.orders[0].status).toBe('paid')
  })

  it('follows the bag: packing, sealed, collected', async () => {
    for (const state of ['packing', 'sealed', 'collected', 'open'] as const) {
      await db.update(schema.bags).set({ state }).where(eq(schema.bags.id, benBag.bagId))
      const res = await asBen.get('/api/my/orders')
      expect(res.body.orders[0].status).toBe(state === 'open' ? 'paid' : state)
    }
  })

  it('shows my bag by stage, with the stand-in packed and its warning', async () => {
    const res = await asAnn.get(`/api/my/bags/${annBag.bagId}`)
    expect(res.status).toBe(200)
    expect(res.body.stages.map((s: { name: string }) => s.name)).toEqual(['Board and power', 'Audio'])
    const q1 = res.body.stages[0].items.find((i: { designators: string }) => i.designators === 'Q1')
    expect(q1).toMatchObject({ part: { name: kit.partNames.npnA }, standIn: { name: kit.partNames.npnB }, warning: kit.swapWarning, qtyNeeded: 1, qtyPacked: 1 })
    const r = res.body.stages[0].items.find((i: { designators: string }) => i.designators === 'R1, R2')
    expect(r).toMatchObject({ standIn: null, warning: null, qtyNeeded: 2 })
    expect(res.body.safety.notes.some((n: string) => /amateur radio licence/.test(n))).toBe(true)
  })

  it('names the options of my order in the order I chose them, on my orders and my bag', async () => {
    const [group] = await db.insert(schema.optionGroups).values({ revisionId: kit.revA, name: 'Extras', rule: 'zero-or-one' }).$returningId()
    const [first] = await db.insert(schema.options).values({ groupId: group!.id, revisionId: kit.revA, name: 'Headphone socket', sortOrder: 1 }).$returningId()
    const [second] = await db.insert(schema.options).values({ groupId: group!.id, revisionId: kit.revA, name: 'Side-tone trimmer', sortOrder: 2 }).$returningId()
    const cai = await makeBuilder(db, 'Cai Builder')
    const caiBag = await makeBag(db, kit, cai.id, { seat: 35 })
    // The later option first, so a list sorted by id or by name would show up; a missing id is left out.
    await db.update(schema.orders).set({ optionIds: [second!.id, 999_999, first!.id] }).where(eq(schema.orders.id, caiBag.orderId))
    const asCai = await signedIn(base, cai.email)
    const orders = await asCai.get('/api/my/orders')
    expect(orders.body.orders[0]).toMatchObject({ id: caiBag.orderId, options: ['Side-tone trimmer', 'Headphone socket'], revisionLabel: 'A' })
    const bag = await asCai.get(`/api/my/bags/${caiBag.bagId}`)
    expect(bag.body.order.options).toEqual(['Side-tone trimmer', 'Headphone socket'])
    // An order without options names none.
    expect((await asAnn.get('/api/my/orders')).body.orders[0].options).toEqual([])
    expect((await asAnn.get(`/api/my/bags/${annBag.bagId}`)).body.order.options).toEqual([])
  })

  it("gives 404 for another builder's bag and workbook, and to a packer on the builder's route", async () => {
    expect((await asBen.get(`/api/my/bags/${annBag.bagId}`)).status).toBe(404)
    expect((await asBen.get(`/api/my/bags/${annBag.bagId}/workbook`)).status).toBe(404)
    expect((await asAnn.get(`/api/my/bags/${benBag.bagId}`)).status).toBe(404)
    const organiserWhoBuilds = await signedIn(base, DEMO.organiser2)
    expect((await organiserWhoBuilds.get(`/api/my/bags/${annBag.bagId}`)).status).toBe(404)
  })

  it('downloads my bag as a workbook: stand-ins in "Packed", warnings highlighted, safety notes (read back with exceljs)', async () => {
    const res = await fetch(`${base}/api/my/bags/${annBag.bagId}/workbook`, { headers: { cookie: asAnn.cookie } })
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toContain('spreadsheetml')
    expect(res.headers.get('content-disposition')).toContain(`bag-${annBag.code}.xlsx`)
    const wb = new ExcelJS.Workbook()
    await wb.xlsx.load(Buffer.from(await res.arrayBuffer()) as unknown as ArrayBuffer)
    const ws = wb.worksheets[0]!
    const rows: string[][] = []
    const rowNumbers: number[] = []
    ws.eachRow((r, n) => {
      rows.push((r.values as unknown[]).slice(1).map(v => String(v ?? '')))
      rowNumbers.push(n)
    })
    const head = rows.findIndex(r => r.includes('Designators'))
    const cols = rows[head]!
    const q1 = rows.find(r => r[cols.indexOf('Designators')] === 'Q1')!
    expect(q1[cols.indexOf('Packed')]).toBe(`${kit.partNames.npnB} (stand-in)`)
    expect(q1[cols.indexOf('Warning')]).toBe(kit.swapWarning)
    const warnCell = ws.getRow(rowNumbers[rows.indexOf(q1)]!).getCell(cols.indexOf('Warning') + 1)
    expect((warnCell.fill as ExcelJS.FillPattern).pattern).toBe('solid')
    const plainCell = ws.getRow(rowNumbers[rows.indexOf(q1)]!).getCell(cols.indexOf('Designators') + 1)
    expect((plainCell.fill as ExcelJS.FillPattern | undefined)?.pattern ?? 'none').toBe('none')
    const r = rows.find(x => x[cols.indexOf('Designators')] === 'R1, R2')!
    expect(r[cols.indexOf('Packed')]).toBe('As listed')
    expect(r[cols.indexOf('Warning')]).toBe('')
    const text = rows.map(x => x.join(' ')).join('\n')
    expect(text).toMatch(/soldering iron/i)
    expect(text).toMatch(/amateur radio licence/)
    expect(wb.worksheets.map(w => w.name)).toEqual(['Whole BOM', 'Board and power', 'Audio'])
  })
})

describe('collection at the door', () => {
  let asPacker: Client
  beforeAll(async () => {
    asPacker = await signedIn(base, DEMO.packer)
  })

  it('refuses a bag that is not sealed, a bin label and a forged code, each with a message', async () => {
    await db.update(schema.bags).set({ state: 'open' }).where(eq(schema.bags.id, benBag.bagId))
    const open = await asPacker.post('/api/collect/scan', { scan: signCode('bag', benBag.code, labelSecret) })
    expect(open.status).toBe(409)
    expect(open.body.message).toContain('not sealed yet')
    const bin = await asPacker.post('/api/collect/scan', { scan: signCode('bin', kit.bins.main, labelSecret) })
    expect(bin.status).toBe(400)
    expect(bin.body.message).toBe(`That is the label of bin ${kit.bins.main}, not a bag`)
    const forged = await asPacker.post('/api/collect/scan', { scan: `${annBag.code}-22222222` })
    expect(forged.status).toBe(400)
    expect(forged.body.message).toMatch(/signature does not match/)
  })

  it('marks a sealed bag collected by its builder from its label URL, once', async () => {
    const [bag] = await db.select().from(schema.bags).where(eq(schema.bags.id, annBag.bagId))
    expect(bag!.state).toBe('sealed')
    const url = `http://hall.example/b/${signCode('bag', annBag.code, labelSecret)}`
    const res = await asPacker.post('/api/collect/scan', { scan: url })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ code: annBag.code, builder: ann.name, seat: 31 })
    const again = await asPacker.post('/api/collect/scan', { scan: url })
    expect(again.status).toBe(409)
    expect(again.body.message).toContain('already collected')
    expect((await asAnn.get('/api/my/orders')).body.orders[0].status).toBe('collected')
    const events = await db.select().from(schema.bagEvents).where(and(eq(schema.bagEvents.bagId, annBag.bagId), eq(schema.bagEvents.kind, 'collect')))
    expect(events).toHaveLength(1)
    const tally = await asPacker.get('/api/collect')
    expect(tally.body.recent.some((r: { code: string }) => r.code === annBag.code)).toBe(true)
  })

  it('is closed to builders', async () => {
    expect((await asAnn.post('/api/collect/scan', { scan: signCode('bag', annBag.code, labelSecret) })).status).toBe(403)
  })
})

describe('rework after a new revision', () => {
  let rk: KitScenario
  let carl: { id: number, email: string, name: string }
  let dora: { id: number, email: string, name: string }
  let carlBag: { bagId: number, code: string }
  let doraBag: { bagId: number, code: string }
  let revB: number
  let asOrganiser: Client

  beforeAll(async () => {
    rk = await makeKitScenario(db)
    carl = await makeBuilder(db, 'Carl Builder')
    dora = await makeBuilder(db, 'Dora Builder')
    carlBag = await makeBag(db, rk, carl.id, { seat: 33 })
    doraBag = await makeBag(db, rk, dora.id, { seat: 34 })
    asOrganiser = await signedIn(base, DEMO.organiser)
  })

  it('lists nothing for the kit while its bags are on the newest revision', async () => {
    const res = await asOrganiser.get('/api/rework')
    expect(res.status).toBe(200)
    expect(res.body.kits.some((k: { kitId: number }) => k.kitId === rk.kitId)).toBe(false)
  })

  it('after revision B is released, lists per sealed bag what to add and take out, from the bag as packed', async () => {
    revB = await releaseRevisionB(db, rk)
    const res = await asOrganiser.get('/api/rework')
    const group = res.body.kits.find((k: { kitId: number }) => k.kitId === rk.kitId)
    expect(group.to).toMatchObject({ id: revB, label: 'B' })
    expect(group.bags.map((b: { code: string }) => b.code).sort()).toEqual([carlBag.code, doraBag.code].sort())
    const bag = group.bags.find((b: { code: string }) => b.code === carlBag.code)
    const steps = (list: { designators: string, partName: string, qty: number }[]) => list.map(s => `${s.designators}: ${s.qty} × ${s.partName}`).sort()
    // Hand-worked from the two revisions: R1–R2 change part, C1 goes, D1 comes, HW1 4 → 6; Q1 keeps its stand-in.
    expect(steps(bag.add)).toEqual([`D1: 1 × ${rk.partNames.diode}`, `HW1: 2 × ${rk.partNames.screw}`, `R1, R2: 2 × ${rk.partNames.r2k2}`].sort())
    expect(steps(bag.remove)).toEqual([`C1: 1 × ${rk.partNames.cap}`, `R1, R2: 2 × ${rk.partNames.r1k}`].sort())
    expect(bag.problems).toEqual([])
  })

  it('refuses to hand a bag over at the door while its rework is pending', async () => {
    const asPacker = await signedIn(base, DEMO.packer)
    const res = await asPacker.post('/api/collect/scan', { scan: signCode('bag', carlBag.code, labelSecret) })
    expect(res.status).toBe(409)
    expect(res.body.message).toContain('waits for rework to revision B')
  })

  it('marks a bag reworked: stock moves of kind rework, the bag now on revision B with its stand-in kept', async () => {
    const parts = [rk.parts.r1k, rk.parts.r2k2, rk.parts.cap, rk.parts.diode, rk.parts.screw]
    const before = await onHandByPart(db, parts)
    const res = await asOrganiser.post(`/api/rework/bags/${carlBag.bagId}`, { decision: 'reworked', toRevisionId: revB })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ decision: 'reworked', added: 3, removed: 2 })
    const after = await onHandByPart(db, parts)
    expect(after.get(rk.parts.r1k)! - before.get(rk.parts.r1k)!).toBe(2)
    expect(after.get(rk.parts.cap)! - before.get(rk.parts.cap)!).toBe(1)
    expect(after.get(rk.parts.r2k2)! - before.get(rk.parts.r2k2)!).toBe(-2)
    expect(after.get(rk.parts.diode)! - before.get(rk.parts.diode)!).toBe(-1)
    expect(after.get(rk.parts.screw)! - before.get(rk.parts.screw)!).toBe(-2)
    const moves = await db.select().from(schema.ledger).where(and(eq(schema.ledger.bagId, carlBag.bagId), eq(schema.ledger.kind, 'rework')))
    expect(moves.map(m => m.qty).sort((a, b) => a - b)).toEqual([-2, -2, -1, 1, 2])
    expect(await lotOnHand(db, rk.lots.main.diode)).toBe(49)

    const asCarl = await signedIn(base, carl.email)
    const view = await asCarl.get(`/api/my/bags/${carlBag.bagId}`)
    expect(view.body.revision.label).toBe('B')
    // The orders list names the revision the bag is packed to, not the one on sale when it was bought.
    expect((await asCarl.get('/api/my/orders')).body.orders[0]).toMatchObject({ bag: { id: carlBag.bagId }, revisionLabel: 'B' })
    const items = view.body.stages.flatMap((s: { items: unknown[] }) => s.items) as { designators: string, part: { name: string }, standIn: { name: string } | null, qtyNeeded: number, qtyPacked: number }[]
    expect(items.map(i => i.designators).sort()).toEqual(['D1', 'HW1', 'PCB1', 'Q1', 'R1, R2'])
    expect(items.find(i => i.designators === 'R1, R2')!.part.name).toBe(rk.partNames.r2k2)
    expect(items.find(i => i.designators === 'HW1')).toMatchObject({ qtyNeeded: 6, qtyPacked: 6 })
    expect(items.find(i => i.designators === 'Q1')!.standIn?.name).toBe(rk.partNames.npnB)
    const lineRevs = await db.select({ rev: schema.bomLines.revisionId }).from(schema.bagItems).innerJoin(schema.bomLines, eq(schema.bomLines.id, schema.bagItems.lineId)).where(eq(schema.bagItems.bagId, carlBag.bagId))
    expect(new Set(lineRevs.map(r => r.rev))).toEqual(new Set([revB]))
  })

  it('keeps the other bag on revision A: no stock moves, and it leaves the list', async () => {
    const res = await asOrganiser.post(`/api/rework/bags/${doraBag.bagId}`, { decision: 'kept', toRevisionId: revB })
    expect(res.status).toBe(200)
    const [bag] = await db.select().from(schema.bags).where(eq(schema.bags.id, doraBag.bagId))
    expect(bag).toMatchObject({ reworkState: 'kept', revisionId: rk.revA })
    expect((await (await signedIn(base, dora.email)).get('/api/my/orders')).body.orders[0]).toMatchObject({ bag: { id: doraBag.bagId }, revisionLabel: 'A' })
    expect(await db.select().from(schema.ledger).where(and(eq(schema.ledger.bagId, doraBag.bagId), eq(schema.ledger.kind, 'rework')))).toEqual([])
    const list = await asOrganiser.get('/api/rework')
    expect(list.body.kits.some((k: { kitId: number }) => k.kitId === rk.kitId)).toBe(false)
    expect(list.body.decided.filter((d: { bagId: number }) => [carlBag.bagId, doraBag.bagId].includes(d.bagId)).map((d: { decision: string }) => d.decision).sort()).toEqual(['kept', 'reworked'])
    const twice = await asOrganiser.post(`/api/rework/bags/${doraBag.bagId}`, { decision: 'reworked', toRevisionId: revB })
    expect(twice.status).toBe(409)
  })

  it('refuses a rework the stock cannot cover, with the part and the counts, and changes nothing', async () => {
    const eve = await makeBuilder(db, 'Eve Builder')
    const eveBag = await makeBag(db, rk, eve.id, { seat: 35 })
    await db.update(schema.lots).set({ onHand: 0 }).where(eq(schema.lots.id, rk.lots.main.diode))
    await db.insert(schema.ledger).values({ lotId: rk.lots.main.diode, partId: rk.parts.diode, binId: (await db.select().from(schema.lots).where(eq(schema.lots.id, rk.lots.main.diode)))[0]!.binId, kind: 'count', qty: -49, reason: 'Builders test: count to zero' })
    const before = await onHandByPart(db, [rk.parts.r1k, rk.parts.screw])
    const res = await asOrganiser.post(`/api/rework/bags/${eveBag.bagId}`, { decision: 'reworked', toRevisionId: revB })
    expect(res.status).toBe(409)
    expect(res.body.message).toBe(`Only 0 of ${rk.partNames.diode} are free (0 on hand, 0 set aside); 1 needed`)
    expect(await onHandByPart(db, [rk.parts.r1k, rk.parts.screw])).toEqual(before)
    const [bag] = await db.select().from(schema.bags).where(eq(schema.bags.id, eveBag.bagId))
    expect(bag!.revisionId).toBe(rk.revA)
  })
})
