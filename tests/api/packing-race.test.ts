// Two packers take the last unit of a lot at the same moment: the second pack must be refused at once,
// not accepted and then left unsealable.
import { afterAll, beforeAll, expect, inject, it } from 'vitest'
import { labelUrl, signCode } from '../../server/utils/codes'
import { Client, DEMO } from '../support/client'
import { appDbUrl } from '../support/stack'
import { makeBag, openDb, type PackDb } from './packing-data'
import { makeKitDay, uid, waitUntil, type Conn } from './selling-fixtures'

const base = inject('baseUrl')
const secret = inject('labelSecret')
let conn: Conn
let db: PackDb
beforeAll(async () => {
  // The app's own account (see appDbUrl): the processlist shows each account its own statements.
  const o = await openDb(appDbUrl(inject('dbUrl')))
  conn = o.conn
  db = o.db
})
afterAll(async () => { await conn.end() })

async function paidBag(dayId: number, offeringId: number) {
  const t = uid()
  const [u] = await conn.query<any>('insert into users (email, name, password_hash) values (?, ?, ?)', [`race.${t}@club.invalid`, `Race ${t}`, 'x'])
  const [o] = await conn.query<any>(`insert into orders (build_day_id, offering_id, user_id, option_ids, state, amount_minor, currency, paid_at) values (?, ?, ?, '[]', 'paid', 1, 'GBP', now())`, [dayId, offeringId, u.insertId])
  return { orderId: o.insertId, ...(await makeBag(db, o.insertId)) }
}

it('two packs of the last unit of a lot: the first seals its bag, the second is refused and packs nothing', async () => {
  // Stock 2 so both reservations fit, then one unit scrapped: one unit is left for two bags.
  const day = await makeKitDay(conn, { seats: 5, lines: [{ qty: 1, stock: 2 }] })
  const a = await paidBag(day.dayId, day.offeringId)
  const b = await paidBag(day.dayId, day.offeringId)
  await conn.query('update lots set on_hand = on_hand - 1 where id = ?', [day.lotIds[0]])
  await conn.query('insert into ledger (lot_id, part_id, bin_id, kind, qty, user_id, reason) select id, part_id, bin_id, \'scrap\', -1, 1, \'race test\' from lots where id = ?', [day.lotIds[0]])
  const [[bin]] = await conn.query<any[]>('select b.code from bins b join lots l on l.bin_id = b.id where l.id = ?', [day.lotIds[0]])
  const p1 = await new Client(base).login(DEMO.packer)
  const p2 = await new Client(base).login(DEMO.packer2)
  expect((await p1.post('/api/pack/scan', { text: labelUrl(base, 'bag', a.code, secret), buildDayId: day.dayId })).status).toBe(200)
  expect((await p2.post('/api/pack/scan', { text: labelUrl(base, 'bag', b.code, secret), buildDayId: day.dayId })).status).toBe(200)

  // Hold bag B's row so B's pack waits inside its transaction after it chose the lot.
  const { conn: lock } = await openDb(inject('dbUrl'))
  await lock.query('start transaction')
  await lock.query('select id from bags where id = ? for update', [b.id])
  const bScan = p2.post('/api/pack/scan', { text: signCode('bin', bin.code, secret), buildDayId: day.dayId, bagId: b.id, qty: 1 })
  await waitUntil('B to wait', async () => {
    const [rows] = await conn.query<any[]>('select info, time_ms from information_schema.processlist where db = database() and info like ?', ['%update bags set claimed_by%'])
    return rows.some((r: any) => Number(r.time_ms) > 200) || null
  })
  const aScan = await p1.post('/api/pack/scan', { text: signCode('bin', bin.code, secret), buildDayId: day.dayId, bagId: a.id, qty: 1 })
  await lock.query('rollback')
  await lock.end()
  const bRes = await bScan

  expect(aScan.status).toBe(200)
  expect(bRes.status).toBe(409)
  expect(bRes.body.message).toMatch(/left on the books/)
  const [states] = await conn.query<any[]>('select id, state from bags where id in (?) order by id', [[a.id, b.id]])
  expect(states[0].state).toBe('sealed')
  expect(['open', 'packing']).toContain(states[1].state)
  const [[packed]] = await conn.query<any[]>('select cast(sum(qty_packed) as signed) as n from bag_items where bag_id = ?', [b.id])
  expect(Number(packed.n)).toBe(0)
  const [[lot]] = await conn.query<any[]>('select on_hand from lots where id = ?', [day.lotIds[0]])
  expect(lot.on_hand).toBe(0)

  // Leave the shared database as an organiser would: the unit found again on a count, so bag B's
  // reservation is covered and the invariant checker (run by other files) finds nothing wrong.
  await conn.query('update lots set on_hand = on_hand + 1 where id = ?', [day.lotIds[0]])
  await conn.query('insert into ledger (lot_id, part_id, bin_id, kind, qty, user_id, reason) select id, part_id, bin_id, \'count\', 1, 1, \'race test: found on a count\' from lots where id = ?', [day.lotIds[0]])
})

it('a pack waiting on the lot counts the pack that held the lot before it, committed meanwhile', async () => {
  // One unit left for two bags, as above; this time bag B's pack is the one already holding the lot.
  const day = await makeKitDay(conn, { seats: 5, lines: [{ qty: 1, stock: 2 }] })
  const a = await paidBag(day.dayId, day.offeringId)
  const b = await paidBag(day.dayId, day.offeringId)
  const lotId = day.lotIds[0]!
  await conn.query('update lots set on_hand = on_hand - 1 where id = ?', [lotId])
  await conn.query('insert into ledger (lot_id, part_id, bin_id, kind, qty, user_id, reason) select id, part_id, bin_id, \'scrap\', -1, 1, \'race test\' from lots where id = ?', [lotId])
  const [[lot]] = await conn.query<any[]>('select l.part_id, l.bin_id, b.code from lots l join bins b on b.id = l.bin_id where l.id = ?', [lotId])
  const [[itemB]] = await conn.query<any[]>('select id from bag_items where bag_id = ?', [b.id])
  const p1 = await new Client(base).login(DEMO.packer)
  expect((await p1.post('/api/pack/scan', { text: labelUrl(base, 'bag', a.code, secret), buildDayId: day.dayId })).status).toBe(200)

  // The "other packer" holds the lot's row lock in a transaction of its own...
  const { conn: other } = await openDb(appDbUrl(inject('dbUrl')))
  await other.query('set transaction isolation level read committed')
  await other.query('start transaction')
  await other.query('select id from lots where id = ? for update', [lotId])
  const aScan = p1.post('/api/pack/scan', { text: signCode('bin', lot.code, secret), buildDayId: day.dayId, bagId: a.id, qty: 1 })
  await waitUntil('A to wait for the lot', async () => {
    const [rows] = await conn.query<any[]>('select info, time_ms from information_schema.processlist where db = database() and info like ?', ['%from lots where id%for update%'])
    return rows.some((r: any) => !/^select id from lots/.test(r.info) && Number(r.time_ms) > 200) || null
  })
  // ...and packs the last unit into bag B, then commits: A's pack, waiting on the lock, must count it.
  await other.query('update bags set state = \'packing\' where id = ?', [b.id])
  await other.query('update bag_items set qty_packed = 1 where id = ?', [itemB.id])
  await other.query('insert into bag_events (bag_id, bag_item_id, kind, lot_id, bin_id, part_id, qty, user_id) values (?, ?, \'pack\', ?, ?, ?, 1, 1)', [b.id, itemB.id, lotId, lot.bin_id, lot.part_id])
  await other.query('commit')
  await other.end()
  const res = await aScan

  expect(res.status, JSON.stringify(res.body)).toBe(409)
  expect(res.body.data.reason).toBe('bin-short')
  const [[packed]] = await conn.query<any[]>('select cast(sum(qty_packed) as signed) as n from bag_items where bag_id = ?', [a.id])
  expect(Number(packed.n)).toBe(0)
  const [[events]] = await conn.query<any[]>('select count(*) as n from bag_events where bag_id = ? and kind = \'pack\'', [a.id])
  expect(Number(events.n)).toBe(0)

  // Leave the shared database consistent: the scrapped unit found again on a count.
  await conn.query('update lots set on_hand = on_hand + 1 where id = ?', [lotId])
  await conn.query('insert into ledger (lot_id, part_id, bin_id, kind, qty, user_id, reason) select id, part_id, bin_id, \'count\', 1, 1, \'race test: found on a count\' from lots where id = ?', [lotId])
})

it('twelve packers pack twelve bags of one kit at once: every scan answered, every bag sealed, stock equal to the ledger', async () => {
  // Every pack of this kit wants the same eight lots, and every seal wants all of them at once.
  const lines = Array.from({ length: 8 }, () => ({ qty: 1, stock: 60 }))
  const day = await makeKitDay(conn, { seats: 20, lines })
  const bags = await Promise.all(Array.from({ length: 12 }, () => paidBag(day.dayId, day.offeringId)))
  const [[bin]] = await conn.query<any[]>('select b.code from bins b join lots l on l.bin_id = b.id where l.id = ?', [day.lotIds[0]])
  const [[{ password_hash: hash }]] = await conn.query<any[]>('select password_hash from users where email = ?', [DEMO.packer])
  const t = Date.now()
  const packers = await Promise.all(bags.map(async (_, i) => {
    const email = `race.crowd.${t}.${i}@club.invalid`
    const [u] = await conn.query<any>('insert into users (email, name, password_hash) values (?, ?, ?)', [email, `Crowd Packer ${i}`, hash])
    await conn.query('insert into user_roles (user_id, role) values (?, ?)', [u.insertId, 'packer'])
    return new Client(base).login(email)
  }))

  const statuses: number[] = []
  await Promise.all(bags.map(async (bag, i) => {
    const p = packers[i]!
    const claim = await p.post('/api/pack/scan', { text: labelUrl(base, 'bag', bag.code, secret), buildDayId: day.dayId })
    statuses.push(claim.status)
    const [items] = await conn.query<any[]>('select id from bag_items where bag_id = ? order by id', [bag.id])
    // Each packer walks the lines from a different start, so the packs cross.
    for (let k = 0; k < items.length; k++) {
      const item = items[(k + i) % items.length]
      const res = await p.post('/api/pack/scan', { text: signCode('bin', bin.code, secret), buildDayId: day.dayId, bagId: bag.id, itemId: item.id, qty: 1 })
      statuses.push(res.status)
    }
  }))

  expect(statuses.filter(s => s !== 200), 'every scan answered 200').toEqual([])
  const [states] = await conn.query<any[]>('select state, count(*) as n from bags where id in (?) group by state', [bags.map(b => b.id)])
  expect(states).toEqual([{ state: 'sealed', n: 12 }])
  const [lots] = await conn.query<any[]>(`select l.id, l.on_hand, cast(sum(g.qty) as signed) as ledger from lots l join ledger g on g.lot_id = l.id
    where l.id in (?) group by l.id, l.on_hand order by l.id`, [day.lotIds])
  expect(lots.map((l: any) => [l.on_hand, Number(l.ledger)])).toEqual(day.lotIds.map(() => [48, 48]))
})
