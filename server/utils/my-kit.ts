import type { Db } from './db'
import { optionNames } from './bags'
import { preparedPer } from './prepared'
import { readScan } from './codes'
import { pendingReworkOf } from './rework'
import { partValueWays, type BomWorkbookInput, type WorkbookLine } from './workbook'

// The builder's side of a build day: their orders, their bag's contents by stage (what was
// actually packed, stand-ins and warnings) and the safety notes every builder page carries.

/** Short safety reminders shown on builder pages and in the bag workbook (our own words). */
export const BUILD_SAFETY = {
  general: [
    'A soldering iron tip runs at well over 300 °C. Put the iron back in its stand every time and keep its cable clear. Cool a burn under running water for 20 minutes and tell a helper.',
    'Solder and flux fumes irritate eyes and lungs. Keep the fume extractor on or work in a ventilated spot, and keep your face out of the smoke.',
    'Wear safety glasses when you trim leads: the cut ends fly. Hold the lead or point it down as you cut.',
    'If your solder contains lead, do not eat or drink at the bench, and wash your hands with soap afterwards.',
    'Check battery and power-supply polarity before the first switch-on. Use batteries or a low-voltage bench supply; never open or wire anything to the mains.',
  ],
  transmit: [
    'This kit transmits. Putting it on the air needs an amateur radio licence: keep to its conditions and your local regulations, including permitted bands, power and RF exposure. Test into a dummy load.',
  ],
  footer: 'These are reminders only: local codes and your licence always come first.',
} as const

/** The safety notes for a kit (the transmit note only for transmitter kits). */
export function safetyNotesFor(transmits: boolean) {
  return { notes: [...BUILD_SAFETY.general, ...(transmits ? BUILD_SAFETY.transmit : [])], transmits, footer: BUILD_SAFETY.footer }
}

export type BuilderOrderStatus = 'pending' | 'paid' | 'packing' | 'sealed' | 'collected' | 'cancelled' | 'expired' | 'refunded'

/** An order's state as the builder sees it: a paid order moves on with its bag. */
export function builderOrderStatus(orderState: string, bagState: string | null | undefined): BuilderOrderStatus {
  if (orderState !== 'paid') return orderState as BuilderOrderStatus
  if (bagState === 'packing' || bagState === 'sealed' || bagState === 'collected') return bagState
  return 'paid'
}

// The kit and build day as both builder reads show them.
const kitColumns = () => ({ id: tables.kits.id, name: tables.kits.name, transmits: tables.kits.transmits })
const dayColumns = () => ({ id: tables.buildDays.id, name: tables.buildDays.name, date: tables.buildDays.date, venue: tables.buildDays.venue })

/** An order's option names in the order's own order, from the names the station also uses (kept for a while). */
async function optionNamesOf(db: Db, orders: { optionIds: number[] | null }[]) {
  const names = await optionNames(db, [...new Set(orders.flatMap(o => o.optionIds ?? []))])
  return (o: { optionIds: number[] | null }) => (o.optionIds ?? []).flatMap(id => (names.has(id) ? [names.get(id)!] : []))
}

// The revision is the bag's once it is packed (perhaps a newer one than on sale when the order was
// placed), else the one the order bought.
const ordersOfBuilder = preparedPer((db: Db) => db.select({
  order: tables.orders,
  kit: kitColumns(),
  revisionLabel: tables.revisions.label,
  day: dayColumns(),
  bag: { id: tables.bags.id, code: tables.bags.code, state: tables.bags.state, collectedAt: tables.bags.collectedAt },
}).from(tables.orders)
  .innerJoin(tables.offerings, eq(tables.offerings.id, tables.orders.offeringId))
  .leftJoin(tables.bags, eq(tables.bags.orderId, tables.orders.id))
  .innerJoin(tables.revisions, eq(tables.revisions.id, sql`coalesce(${tables.bags.revisionId}, ${tables.offerings.revisionId})`))
  .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
  .innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.orders.buildDayId))
  .where(and(eq(tables.orders.userId, sql.placeholder('userId')), ne(tables.orders.state, 'expired')))
  .orderBy(desc(tables.orders.createdAt), desc(tables.orders.id))
  .prepare())

/** The builder's orders, newest first, with the kit, build day and bag state (expired holds left out). */
export async function listBuilderOrders(db: Db, userId: number) {
  const rows = await ordersOfBuilder(db).execute({ userId })
  const optionsOf = await optionNamesOf(db, rows.map(r => r.order))
  return rows.map(r => ({
    id: r.order.id,
    state: r.order.state,
    status: builderOrderStatus(r.order.state, r.bag?.state),
    seat: r.order.seat,
    amountMinor: r.order.amountMinor,
    currency: r.order.currency,
    paidAt: r.order.paidAt,
    kit: r.kit,
    revisionLabel: r.revisionLabel,
    options: optionsOf(r.order),
    buildDay: r.day,
    bag: r.bag ? { id: r.bag.id, code: r.bag.code, state: r.bag.state, collectedAt: r.bag.collectedAt } : null,
  }))
}

export interface BagPartView {
  id: number, name: string, kind: string, value: number | null, unit: string | null, valueText: string | null, tolerancePct: number | null
  mounting: 'tht' | 'smd' | null, dielectric: string | null, package: string | null, pinoutNote: string | null
}
export interface BagItemView {
  itemId: number
  lineId: number
  designators: string
  notes: string | null
  qtyNeeded: number
  qtyPacked: number
  part: BagPartView
  /** The stand-in actually packed instead of the line's part, if any. */
  standIn: BagPartView | null
  warning: string | null
}
export interface BagStageView { name: string, order: number, items: BagItemView[] }

function unknownPart(id: number): BagPartView {
  return { id, name: `Part ${id}`, kind: 'other', value: null, unit: null, valueText: null, tolerancePct: null, mounting: null, dielectric: null, package: null, pinoutNote: null }
}

const bagHeaderForBuilder = preparedPer((db: Db) => db.select({
  bag: tables.bags, order: tables.orders,
  revision: { id: tables.revisions.id, label: tables.revisions.label },
  kit: kitColumns(),
  day: dayColumns(),
  builder: { id: tables.users.id, name: tables.users.name, email: tables.users.email, callsign: tables.users.callsign },
}).from(tables.bags)
  .innerJoin(tables.orders, eq(tables.orders.id, tables.bags.orderId))
  .innerJoin(tables.revisions, eq(tables.revisions.id, tables.bags.revisionId))
  .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
  .innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.bags.buildDayId))
  .innerJoin(tables.users, eq(tables.users.id, tables.orders.userId))
  .where(eq(tables.bags.id, sql.placeholder('bagId')))
  .prepare())

// The bag's own rows first (the index hint), its lines and stages by their keys; the parts' rows by id.
const bagItemsForBuilder = preparedPer((db: Db) => db.select({
  item: tables.bagItems,
  designators: tables.bomLines.designators, notes: tables.bomLines.notes, lineOrder: tables.bomLines.sortOrder,
  stageName: tables.stages.name, stageOrder: tables.stages.sortOrder,
}).from(tables.bagItems, { forceIndex: 'bag_items_bag_idx' })
  .innerJoin(tables.bomLines, eq(tables.bomLines.id, tables.bagItems.lineId))
  .leftJoin(tables.stages, eq(tables.stages.id, tables.bagItems.stageId))
  .where(eq(tables.bagItems.bagId, sql.placeholder('bagId')))
  .prepare())

/** The parts of a bag's lines and of the stand-ins packed (a small derived table, then parts by key). */
async function partsOfBag(db: Db, bagId: number) {
  const [rows] = await db.execute(sql`select p.id, p.name, p.kind, p.value, p.unit, p.value_text as valueText, p.tolerance_pct as tolerancePct,
      p.mounting, p.dielectric, p.package, p.pinout_note as pinoutNote
    from (select i.part_id as id from bag_items i where i.bag_id = ${bagId}
      union select i.stand_in_part_id from bag_items i where i.bag_id = ${bagId} and i.stand_in_part_id is not null) x
    join parts p on p.id = x.id`)
  return rows as unknown as BagPartView[]
}

/**
 * One bag with its order, kit and contents grouped by stage. `ownerId` limits it to that
 * builder's bags (another builder's bag is a 404, as if it did not exist); null for the desk.
 */
export async function loadBagForBuilder(db: Db, bagId: number, ownerId: number | null) {
  // The owner check is in code, after one keyed read: another builder's bag is "not found" all the same.
  const [[found], items, partRows] = await Promise.all([
    bagHeaderForBuilder(db).execute({ bagId }),
    bagItemsForBuilder(db).execute({ bagId }),
    partsOfBag(db, bagId),
  ])
  const row = found && (ownerId == null || found.order.userId === ownerId) ? found : undefined
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No such bag among your orders' })
  const optionsOf = await optionNamesOf(db, [row.order])
  const partOf = new Map(partRows.map(p => [p.id, p]))

  const stages = new Map<string, BagStageView>()
  const sorted = [...items].sort((a, b) => (a.stageOrder ?? 1e9) - (b.stageOrder ?? 1e9) || a.lineOrder - b.lineOrder || a.item.id - b.item.id)
  for (const i of sorted) {
    const name = i.stageName ?? 'Other parts'
    if (!stages.has(name)) stages.set(name, { name, order: i.stageOrder ?? 1e9, items: [] })
    const standIn = i.item.standInPartId != null && i.item.standInPartId !== i.item.partId ? partOf.get(i.item.standInPartId) ?? null : null
    stages.get(name)!.items.push({
      itemId: i.item.id, lineId: i.item.lineId, designators: i.designators, notes: i.notes,
      qtyNeeded: i.item.qtyNeeded, qtyPacked: i.item.qtyPacked,
      part: partOf.get(i.item.partId) ?? unknownPart(i.item.partId),
      standIn, warning: i.item.standInWarning,
    })
  }
  return {
    bag: { id: row.bag.id, code: row.bag.code, state: row.bag.state, sealedAt: row.bag.sealedAt, collectedAt: row.bag.collectedAt, reworkState: row.bag.reworkState },
    order: { id: row.order.id, state: row.order.state, status: builderOrderStatus(row.order.state, row.bag.state), seat: row.order.seat, options: optionsOf(row.order) },
    kit: row.kit,
    revision: row.revision,
    buildDay: row.day,
    builder: row.builder,
    stages: [...stages.values()],
    safety: safetyNotesFor(row.kit.transmits),
  }
}

export type BuilderBag = Awaited<ReturnType<typeof loadBagForBuilder>>

/**
 * The bag workbook's input for the shared BOM workbook: the lines as packed (stand-ins named in
 * "Packed", their warnings in "Warning", highlighted) and the safety notes on every sheet.
 */
export function bagWorkbookInput(view: BuilderBag): BomWorkbookInput {
  const header: [string, string][] = [
    ['Builder', view.builder.name + (view.builder.callsign ? ` (${view.builder.callsign})` : '')],
    ['Kit', `${view.kit.name}, revision ${view.revision.label}`],
    ['Options', view.order.options.join(', ') || 'none'],
    ['Bag', `${view.bag.code}${view.order.seat ? `, seat ${view.order.seat}` : ''}`],
    ['Build day', `${view.buildDay.name}, ${view.buildDay.date}, ${view.buildDay.venue}`],
  ]
  const lines: WorkbookLine[] = view.stages.flatMap(s => s.items.map(i => ({
    designators: i.designators,
    qty: i.qtyNeeded,
    stage: s.name,
    part: i.part.name,
    value: partValueWays(i.standIn ?? i.part),
    package: (i.standIn ?? i.part).package,
    notes: [i.notes, (i.standIn ?? i.part).pinoutNote].filter(Boolean).join(' · ') || null,
    packed: i.standIn ? `${i.standIn.name} (stand-in)` : 'As listed',
    warning: i.warning,
  })))
  return {
    title: `${view.kit.name} — my bag ${view.bag.code}`,
    header,
    stages: view.stages.map(s => s.name),
    lines,
    cautions: [...view.safety.notes, view.safety.footer],
  }
}

/**
 * At the door: a scanned bag label marks its sealed bag collected by its builder. Refused (409)
 * when the bag is not sealed, already collected, its order is no longer paid, or it waits for rework.
 */
export async function collectBagByScan(db: Db, scan: string, userId: number) {
  const read = readScan(scan, useRuntimeConfig().labelSecret)
  if ('error' in read) throw createError({ statusCode: 400, statusMessage: 'Unreadable label', message: `Could not read the label: ${read.error}` })
  if (read.kind !== 'bag') throw createError({ statusCode: 400, statusMessage: 'Not a bag', message: `That is the label of bin ${read.code}, not a bag` })
  const [row] = await db.select({
    bag: tables.bags, orderState: tables.orders.state, seat: tables.orders.seat, builder: tables.users.name, kit: tables.kits.name, revision: tables.revisions.label,
  }).from(tables.bags)
    .innerJoin(tables.orders, eq(tables.orders.id, tables.bags.orderId))
    .innerJoin(tables.users, eq(tables.users.id, tables.orders.userId))
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.bags.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .where(eq(tables.bags.code, read.code))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No bag ${read.code}` })
  const { bag } = row
  const who = `${row.builder}${row.seat ? `, seat ${row.seat}` : ''}`
  if (bag.state === 'collected') {
    const at = bag.collectedAt ? bag.collectedAt.toISOString().slice(11, 16) : '?'
    throw createError({ statusCode: 409, statusMessage: 'Already collected', message: `Bag ${bag.code} (${who}) was already collected at ${at} UTC` })
  }
  if (bag.state !== 'sealed') throw createError({ statusCode: 409, statusMessage: 'Not sealed', message: `Bag ${bag.code} (${who}) is not sealed yet: it is still ${bag.state === 'open' ? 'waiting to be packed' : 'being packed'}` })
  if (row.orderState !== 'paid') throw createError({ statusCode: 409, statusMessage: 'Order not paid', message: `The order for bag ${bag.code} is ${row.orderState}: do not hand it over` })
  const rework = await pendingReworkOf(db, bag)
  if (rework) throw createError({ statusCode: 409, statusMessage: 'Rework pending', message: `Bag ${bag.code} waits for rework to revision ${rework.label}: rework it or leave it on its revision first` })
  const collectedAt = new Date()
  await db.transaction(async (tx) => {
    const [res] = await tx.update(tables.bags).set({ state: 'collected', collectedAt }).where(and(eq(tables.bags.id, bag.id), eq(tables.bags.state, 'sealed')))
    if (res.affectedRows !== 1) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Bag ${bag.code} changed just now: scan it again` })
    await tx.insert(tables.bagEvents).values({ bagId: bag.id, kind: 'collect', userId, note: `Collected by ${row.builder}` })
  })
  return { bagId: bag.id, code: bag.code, builder: row.builder, seat: row.seat, kit: row.kit, revision: row.revision, collectedAt }
}

/** The door's tally per build day (sealed waiting, collected) and the latest collections. */
export async function collectionTally(db: Db) {
  const counts = await db.select({ dayId: tables.bags.buildDayId, day: tables.buildDays.name, date: tables.buildDays.date, state: tables.bags.state, n: sql<number>`count(*)` })
    .from(tables.bags).innerJoin(tables.buildDays, eq(tables.buildDays.id, tables.bags.buildDayId))
    .where(inArray(tables.bags.state, ['sealed', 'collected'])).groupBy(tables.bags.buildDayId, tables.buildDays.name, tables.buildDays.date, tables.bags.state)
  const days = new Map<number, { id: number, name: string, date: string, sealed: number, collected: number }>()
  for (const c of counts) {
    const d = days.get(c.dayId) ?? { id: c.dayId, name: c.day, date: c.date, sealed: 0, collected: 0 }
    d[c.state as 'sealed' | 'collected'] = Number(c.n)
    days.set(c.dayId, d)
  }
  const recent = await db.select({ code: tables.bags.code, collectedAt: tables.bags.collectedAt, builder: tables.users.name, seat: tables.orders.seat })
    .from(tables.bags).innerJoin(tables.orders, eq(tables.orders.id, tables.bags.orderId)).innerJoin(tables.users, eq(tables.users.id, tables.orders.userId))
    .where(eq(tables.bags.state, 'collected')).orderBy(desc(tables.bags.collectedAt)).limit(10)
  return { days: [...days.values()].sort((a, b) => a.date.localeCompare(b.date)), recent }
}
