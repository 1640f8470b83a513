// Records the packing tests and the packing bench make for themselves: a build day of their own,
// builders, paid orders with confirmed reservations, and their bags (through createBagForOrder).
import { randomBytes } from 'node:crypto'
import { and, eq, sql } from 'drizzle-orm'
import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import * as schema from '../../server/db/schema'
import { createBagForOrder } from '../../server/utils/bags'

export type PackDb = MySql2Database<typeof schema>

export async function openDb(url: string) {
  const conn = await mysql.createConnection({ uri: url, timezone: 'Z', dateStrings: ['DATE'] })
  return { conn, db: drizzle(conn, { schema, mode: 'default' }) }
}

export const tag = () => randomBytes(4).toString('hex')

export async function demoDayId(db: PackDb) {
  const [day] = await db.select().from(schema.buildDays).where(eq(schema.buildDays.name, 'Harrowmere Winter Build Day'))
  return day!.id
}

/** A build day of the test's own (fields as given, else a test hall's), offering every released demo revision. */
export async function makeBuildDay(db: PackDb, name = `Packing test day ${tag()}`, fields: Partial<typeof schema.buildDays.$inferInsert> = {}) {
  const [day] = await db.insert(schema.buildDays).values({
    name, date: '2027-06-12', venue: 'Test hall', seats: 500, salesOpenAt: new Date('2027-01-01T00:00:00Z'), salesCloseAt: new Date('2027-06-01T00:00:00Z'), currency: 'GBP', ...fields,
  }).$returningId()
  const revs = await db.select({ id: schema.revisions.id }).from(schema.revisions).where(eq(schema.revisions.state, 'released'))
  for (const r of revs) {
    const opts = await db.select({ id: schema.options.id }).from(schema.options).where(eq(schema.options.revisionId, r.id))
    await db.insert(schema.offerings).values({ buildDayId: day!.id, revisionId: r.id, allowedOptionIds: opts.map(o => o.id), memberPriceMinor: 2000, nonMemberPriceMinor: 2500 })
  }
  return day!.id
}

/** A builder with a paid order for a kit at a build day, confirmed reservations of the own parts, and no bag yet. */
export async function makePaidOrder(db: PackDb, opts: { buildDayId: number, slug: string, option?: string, seat?: number }) {
  const t = tag()
  const [user] = await db.insert(schema.users).values({ email: `packing.${t}@club.invalid`, name: `Packing Builder ${t}`, passwordHash: 'not-a-login' }).$returningId()
  await db.insert(schema.userRoles).values({ userId: user!.id, role: 'builder' })
  const [offering] = await db.select({ id: schema.offerings.id, revisionId: schema.offerings.revisionId }).from(schema.offerings)
    .innerJoin(schema.revisions, eq(schema.revisions.id, schema.offerings.revisionId))
    .innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
    .where(and(eq(schema.offerings.buildDayId, opts.buildDayId), eq(schema.kits.slug, opts.slug)))
  const optionIds = opts.option
    ? (await db.select({ id: schema.options.id }).from(schema.options).where(and(eq(schema.options.revisionId, offering!.revisionId), eq(schema.options.name, opts.option)))).map(o => o.id)
    : []
  const [order] = await db.insert(schema.orders).values({
    buildDayId: opts.buildDayId, offeringId: offering!.id, userId: user!.id, optionIds, state: 'paid', amountMinor: 2000, currency: 'GBP',
    seat: opts.seat ?? null, stripeSessionId: `cs_packing_${t}`, paidAt: new Date(),
  }).$returningId()
  return { orderId: order!.id, userId: user!.id, name: `Packing Builder ${t}` }
}

/** The bag for an order, with confirmed reservations of each line's own part. */
export async function makeBag(db: PackDb, orderId: number) {
  return db.transaction(async (tx) => {
    const bag = await createBagForOrder(tx, orderId)
    const items = await tx.select().from(schema.bagItems).where(eq(schema.bagItems.bagId, bag.id))
    const had = await tx.select({ n: sql<number>`count(*)` }).from(schema.reservations).where(eq(schema.reservations.orderId, orderId))
    if (!Number(had[0]?.n) && items.length)
      await tx.insert(schema.reservations).values(items.map(i => ({ orderId, lineId: i.lineId, partId: i.partId, qty: i.qtyNeeded, state: 'confirmed' as const })))
    return bag
  })
}

export async function makePaidBag(db: PackDb, opts: Parameters<typeof makePaidOrder>[1]) {
  const order = await makePaidOrder(db, opts)
  return { ...order, ...(await makeBag(db, order.orderId)) }
}

/** Lots whose cached on-hand differs from the sum of their ledger rows (none, when all is well). */
export async function stockLedgerMismatches(db: PackDb) {
  const [rows] = await db.execute(sql`select l.id, l.on_hand as onHand, coalesce(sum(g.qty), 0) as ledger
    from lots l left join ledger g on g.lot_id = l.id group by l.id, l.on_hand having l.on_hand <> coalesce(sum(g.qty), 0)`)
  return rows as unknown as { id: number, onHand: number, ledger: number }[]
}

/**
 * Enough stock for a bench: one more lot of each part, in the part's own bin, received through the
 * ledger by the demo organiser. An old `receivedOn` makes the station pack from it first, so the small
 * demo lots are not raced to zero.
 */
export async function topUpStock(db: PackDb, lot: { qty: number, receivedOn: string, note: string }) {
  const lots = await db.select().from(schema.lots)
  const [organiser] = await db.select().from(schema.users).where(eq(schema.users.email, 'olwen.hartley@club.invalid'))
  const seen = new Set<number>()
  for (const l of lots) {
    if (seen.has(l.partId)) continue
    seen.add(l.partId)
    const [made] = await db.insert(schema.lots).values({ partId: l.partId, binId: l.binId, qtyReceived: lot.qty, onHand: lot.qty, unitCostMinor: l.unitCostMinor, receivedOn: lot.receivedOn, note: lot.note }).$returningId()
    await db.insert(schema.ledger).values({ lotId: made!.id, partId: l.partId, binId: l.binId, kind: 'receive', qty: lot.qty, userId: organiser!.id, reason: lot.note })
  }
}
