import { and, asc, eq, inArray, isNull, sql, type Placeholder, type SQL } from 'drizzle-orm'
import { alias } from 'drizzle-orm/mysql-core'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import { createError } from 'h3'
import * as schema from '../db/schema'
import { reconcile } from '../../shared/utils/reconcile'
import { DEFAULT_PARAMETRIC, standInsFor, type ParametricSettings, type SwapGroup, type SwapPart } from '../../shared/utils/swaps'
import { labelUrl, newBagCode, signCode } from './codes'
import type { Label } from './labels'
import { loadEffectiveBom } from './revision-bom'
import { availableByPart } from './stock'
import type { Tx } from './db'
import { preparedPer } from './prepared'

// Explicit imports: the seed and the selling developer's webhook call these outside Nitro's auto-imports.

type AnyDb = MySql2Database<typeof schema>
const CODE_ATTEMPTS = 8

export interface CreatedBag { id: number, code: string, created: boolean }

/**
 * Creates the bag for a paid order inside the caller's transaction: one bag_item per effective BOM
 * line (its stage is its pouch). Idempotent: an order that already has a bag gets that bag back.
 */
export async function createBagForOrder(tx: Tx, orderId: number): Promise<CreatedBag> {
  const existing = await bagOfOrder(tx, orderId)
  if (existing) return { ...existing, created: false }
  const [row] = await tx.select({ order: schema.orders, revisionId: schema.offerings.revisionId })
    .from(schema.orders).innerJoin(schema.offerings, eq(schema.offerings.id, schema.orders.offeringId))
    .where(eq(schema.orders.id, orderId))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No order ${orderId}` })
  if (row.order.state !== 'paid')
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Order ${orderId} is ${row.order.state}: only a paid order gets a bag` })

  const { effective, rows } = await loadEffectiveBom(tx as unknown as AnyDb, row.revisionId, row.order.optionIds ?? [])
  const unassigned = effective.filter(l => l.partId == null)
  if (unassigned.length)
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Line ${unassigned.map(l => l.designators).join(', ')} has no catalogue part yet, so it cannot be packed` })

  const bagId = await insertBag(tx, { orderId, buildDayId: row.order.buildDayId, revisionId: row.revisionId })
  if (bagId === null) return { ...(await bagOfOrder(tx, orderId))!, created: false }
  const stageOf = new Map(rows.map(l => [l.id, l.stageId]))
  if (effective.length) {
    await tx.insert(schema.bagItems).values(effective.map(l => ({
      bagId: bagId.id, lineId: Number(l.id), stageId: stageOf.get(Number(l.id)) ?? null, partId: Number(l.partId), qtyNeeded: l.qty,
    })))
  }
  return { ...bagId, created: true }
}

/** Creates bags for every paid order of a build day that has none yet (the organiser's bulk action). */
export async function createMissingBags(db: AnyDb, buildDayId: number) {
  const waiting = await db.select({ id: schema.orders.id }).from(schema.orders)
    .leftJoin(schema.bags, eq(schema.bags.orderId, schema.orders.id))
    .where(and(eq(schema.orders.buildDayId, buildDayId), eq(schema.orders.state, 'paid'), isNull(schema.bags.id)))
    .orderBy(asc(schema.orders.seat), asc(schema.orders.id))
  const created: CreatedBag[] = []
  const failed: { orderId: number, message: string }[] = []
  for (const o of waiting) {
    try {
      const bag = await db.transaction(tx => createBagForOrder(tx, o.id))
      if (bag.created) created.push(bag)
    }
    catch (err) {
      const e = err as { message?: string }
      failed.push({ orderId: o.id, message: e.message ?? 'could not create the bag' })
    }
  }
  return { created, failed }
}

async function bagOfOrder(tx: Pick<Tx, 'select'>, orderId: number) {
  const [bag] = await tx.select({ id: schema.bags.id, code: schema.bags.code }).from(schema.bags).where(eq(schema.bags.orderId, orderId))
  return bag
}

/** Inserts the bag row with a fresh code, retrying on the rare duplicate code; null when the order got its bag meanwhile. */
async function insertBag(tx: Tx, values: { orderId: number, buildDayId: number, revisionId: number }) {
  for (let attempt = 0; attempt < CODE_ATTEMPTS; attempt++) {
    const code = newBagCode()
    try {
      const [row] = await tx.insert(schema.bags).values({ ...values, code }).$returningId()
      return { id: row!.id, code }
    }
    catch (err) {
      const e = err as { code?: string, message?: string, cause?: { code?: string, message?: string } }
      const dup = e.code === 'ER_DUP_ENTRY' || e.cause?.code === 'ER_DUP_ENTRY'
      const text = `${e.message ?? ''} ${e.cause?.message ?? ''}`
      if (!dup) throw err
      if (text.includes('bags_order_uq')) return null
    }
  }
  throw createError({ statusCode: 503, statusMessage: 'Try again', message: 'Could not find a free bag code: try again' })
}

// ---- the bag as the packing station, the bag page and the labels see it ----

export const COUNTED_SINGLY: readonly string[] = ['ic', 'transistor', 'crystal', 'board', 'connector']

export type BagHeader = Awaited<ReturnType<typeof loadBagHeaders>>[number]

function bagHeaderQuery(db: AnyDb, lapseSeconds: number | Placeholder) {
  const B = schema.bags
  const claimer = alias(schema.users, 'claimer')
  const sealer = alias(schema.users, 'sealer')
  return db.select({
    id: B.id, code: B.code, state: B.state, orderId: B.orderId, buildDayId: B.buildDayId, revisionId: B.revisionId,
    claimedBy: B.claimedBy, claimedAt: B.claimedAt, sealedAt: B.sealedAt, reworkState: B.reworkState,
    claimLapsed: sql<number>`(${B.claimedAt} is null or ${B.claimedAt} < now() - interval ${lapseSeconds} second)`,
    buildDayName: schema.buildDays.name, buildDayDate: schema.buildDays.date,
    builderName: schema.users.name, seat: schema.orders.seat, optionIds: schema.orders.optionIds, orderState: schema.orders.state,
    kitName: schema.kits.name, revisionLabel: schema.revisions.label,
    claimerName: claimer.name, sealerName: sealer.name,
  }).from(B)
    .innerJoin(schema.orders, eq(schema.orders.id, B.orderId))
    .innerJoin(schema.users, eq(schema.users.id, schema.orders.userId))
    .innerJoin(schema.buildDays, eq(schema.buildDays.id, B.buildDayId))
    .innerJoin(schema.revisions, eq(schema.revisions.id, B.revisionId))
    .innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
    .leftJoin(claimer, eq(claimer.id, B.claimedBy))
    .leftJoin(sealer, eq(sealer.id, B.sealedBy))
}

const headerById = preparedPer((db: AnyDb) => bagHeaderQuery(db, sql.placeholder('lapse')).where(eq(schema.bags.id, sql.placeholder('id'))).prepare())
const headerByCode = preparedPer((db: AnyDb) => bagHeaderQuery(db, sql.placeholder('lapse')).where(eq(schema.bags.code, sql.placeholder('code'))).prepare())

/** Bag headers (builder, kit, revision, options, claim) by bag ids or codes. */
export async function loadBagHeaders(db: AnyDb, where: { ids?: number[], codes?: string[], buildDayId?: number }, lapseSeconds = 600) {
  const B = schema.bags
  let rows: Awaited<ReturnType<ReturnType<typeof bagHeaderQuery>['execute']>>
  if (where.ids?.length === 1 || where.codes?.length === 1) {
    // One bag (every scan at the packing station): the prepared query.
    rows = where.ids ? await headerById(db).execute({ id: where.ids[0], lapse: lapseSeconds }) : await headerByCode(db).execute({ code: where.codes![0], lapse: lapseSeconds })
  }
  else {
    const cond = where.ids ? inArray(B.id, where.ids.length ? where.ids : [0])
      : where.codes ? inArray(B.code, where.codes.length ? where.codes : [''])
        : eq(B.buildDayId, where.buildDayId ?? 0)
    rows = await bagHeaderQuery(db, lapseSeconds).where(cond).orderBy(asc(schema.orders.seat), asc(B.id))
  }
  return headersFromRows(db, rows)
}

export type BagHeaderRow = Awaited<ReturnType<ReturnType<typeof bagHeaderQuery>['execute']>>[number]

/** Header rows as the pages and the station use them: option names, and the claim unless it lapsed. */
export async function headersFromRows(db: AnyDb, rows: BagHeaderRow[]) {
  const names = await optionNames(db, [...new Set(rows.flatMap(r => r.optionIds ?? []))])
  return rows.map(({ optionIds: ids, claimLapsed, claimerName, sealerName, ...r }) => ({
    ...r,
    options: (ids ?? []).map(id => names.get(id) ?? `option ${id}`),
    claim: r.claimedBy && !Number(claimLapsed) ? { userId: r.claimedBy, name: claimerName ?? '', at: r.claimedAt } : null,
    sealedByName: sealerName,
  }))
}

/**
 * The same header and items as loadBagHeaders and loadBagItems, as plain SQL text for one bag (the
 * packing station sends them with other statements in one round trip); rawHeaderRow and rawItemRows
 * turn their rows into the same shapes.
 */
export function oneBagReadSql(lapseSeconds: number) {
  return {
    header: `select g.id, g.code, g.state, g.order_id as orderId, g.build_day_id as buildDayId, g.revision_id as revisionId,
    g.claimed_by as claimedBy, g.claimed_at as claimedAt, g.sealed_at as sealedAt, g.rework_state as reworkState,
    (g.claimed_at is null or g.claimed_at < now() - interval ${Math.round(lapseSeconds)} second) as claimLapsed,
    d.name as buildDayName, d.date as buildDayDate, u.name as builderName, o.seat, o.option_ids as optionIds, o.state as orderState,
    k.name as kitName, r.label as revisionLabel, c.name as claimerName, s.name as sealerName
  from bags g join orders o on o.id = g.order_id join users u on u.id = o.user_id join build_days d on d.id = g.build_day_id
    join revisions r on r.id = g.revision_id join kits k on k.id = r.kit_id
    left join users c on c.id = g.claimed_by left join users s on s.id = g.sealed_by
  where g.id = ?`,
    items: `select i.id as itemId, i.bag_id as bagId, i.line_id as lineId, i.stage_id as stageId, i.part_id as partId,
    i.qty_needed as qtyNeeded, i.qty_packed as qtyPacked, i.stand_in_part_id as standInPartId, i.stand_in_warning as standInWarning,
    l.designators, l.notes, l.no_stand_ins as noStandIns, l.sort_order as lineOrder, st.name as stageName, st.sort_order as stageOrder,
    p.name as partName, p.value_text as valueText, p.kind, p.pinout_note as pinoutNote, si.name as standInName
  from bag_items i force index (bag_items_bag_idx) join bom_lines l on l.id = i.line_id join parts p on p.id = i.part_id
    left join stages st on st.id = i.stage_id left join parts si on si.id = i.stand_in_part_id
  where i.bag_id = ?`,
  }
}

/** A raw header row (mysql2, no Drizzle) in Drizzle's shape: JSON option ids parsed. */
export function rawHeaderRow(r: Record<string, unknown>): BagHeaderRow {
  const ids = typeof r.optionIds === 'string' ? JSON.parse(r.optionIds) as number[] : ((r.optionIds as number[] | null) ?? [])
  return { ...(r as unknown as BagHeaderRow), optionIds: ids, claimLapsed: Number(r.claimLapsed) }
}

/** Raw item rows (mysql2, no Drizzle) in loadBagItems' shape and order. */
export function rawItemRows(rows: Record<string, unknown>[]): BagItemRow[] {
  return inPouchOrder((rows as unknown as BagItemRow[]).map(r => ({ ...r, noStandIns: Boolean(Number(r.noStandIns)) })))
}

const optionCache = new Map<number, { name: string, at: number }>()
const OPTION_TTL_MS = 30_000

/** Option names by id, remembered for a while (every scan and builder page shows them; they are renamed rarely). */
export async function optionNames(db: AnyDb, ids: number[]) {
  const now = Date.now()
  const missing = ids.filter(id => (optionCache.get(id)?.at ?? 0) < now - OPTION_TTL_MS)
  if (missing.length) {
    const rows = await db.select({ id: schema.options.id, name: schema.options.name }).from(schema.options).where(inArray(schema.options.id, missing))
    for (const o of rows) optionCache.set(o.id, { name: o.name, at: now })
  }
  return new Map(ids.flatMap(id => (optionCache.has(id) ? [[id, optionCache.get(id)!.name] as const] : [])))
}

export type BagItemRow = Awaited<ReturnType<typeof loadBagItems>>[number]

function bagItemQuery(db: AnyDb) {
  const I = schema.bagItems
  const standIn = alias(schema.parts, 'stand_in')
  return db.select({
    itemId: I.id, bagId: I.bagId, lineId: I.lineId, stageId: I.stageId, partId: I.partId,
    qtyNeeded: I.qtyNeeded, qtyPacked: I.qtyPacked, standInPartId: I.standInPartId, standInWarning: I.standInWarning,
    designators: schema.bomLines.designators, notes: schema.bomLines.notes, noStandIns: schema.bomLines.noStandIns, lineOrder: schema.bomLines.sortOrder,
    stageName: schema.stages.name, stageOrder: schema.stages.sortOrder,
    partName: schema.parts.name, valueText: schema.parts.valueText, kind: schema.parts.kind, pinoutNote: schema.parts.pinoutNote,
    standInName: standIn.name,
  // Read the bag's own rows first: without the hint the optimiser may walk every BOM line of the
  // revision and probe bag_items per line, which grows with the number of bags.
  }).from(I, { forceIndex: 'bag_items_bag_idx' })
    .innerJoin(schema.bomLines, eq(schema.bomLines.id, I.lineId))
    .innerJoin(schema.parts, eq(schema.parts.id, I.partId))
    .leftJoin(schema.stages, eq(schema.stages.id, I.stageId))
    .leftJoin(standIn, eq(standIn.id, I.standInPartId))
}
const ITEM_ORDER = () => [asc(schema.bagItems.bagId), asc(schema.stages.sortOrder), asc(schema.bomLines.sortOrder), asc(schema.bagItems.id)]
// One bag's few rows are put in order here rather than by the database (no temporary table and sort
// on every scan); the order is ITEM_ORDER's, stages without an order first as MariaDB sorts NULL.
const itemsOfOneBag = preparedPer((db: AnyDb) => bagItemQuery(db).where(eq(schema.bagItems.bagId, sql.placeholder('bagId'))).prepare())
const orderKey = (v: number | null) => (v == null ? -Infinity : v)
function inPouchOrder<R extends { stageOrder: number | null, lineOrder: number, itemId: number }>(rows: R[]) {
  return rows.sort((a, b) => (orderKey(a.stageOrder) - orderKey(b.stageOrder)) || (a.lineOrder - b.lineOrder) || (a.itemId - b.itemId))
}

/** A bag's items with their line, part, stage and any stand-in packed, in pouch (stage) order. */
export async function loadBagItems(db: AnyDb, bagIds: number[]) {
  if (!bagIds.length) return []
  if (bagIds.length === 1) {
    return inPouchOrder(await itemsOfOneBag(db).execute({ bagId: bagIds[0] }))
  }
  return bagItemQuery(db).where(inArray(schema.bagItems.bagId, bagIds)).orderBy(...ITEM_ORDER())
}

export interface PouchView {
  stageId: number | null
  name: string
  number: number
  needed: number
  packed: number
  items: (BagItemRow & { countSingly: boolean, bins: string[] })[]
}

/** Groups items into pouches (one per stage) with per-pouch counts. */
export function pouchesOf(items: BagItemRow[], binsByItem: Map<number, string[]> = new Map()): PouchView[] {
  const pouches: PouchView[] = []
  for (const it of items) {
    let p = pouches.find(x => x.stageId === it.stageId)
    if (!p) {
      p = { stageId: it.stageId, name: it.stageName ?? 'Loose parts', number: pouches.length + 1, needed: 0, packed: 0, items: [] }
      pouches.push(p)
    }
    p.needed += it.qtyNeeded
    p.packed += it.qtyPacked
    p.items.push({ ...it, countSingly: COUNTED_SINGLY.includes(it.kind), bins: binsByItem.get(it.itemId) ?? [] })
  }
  return pouches
}

export function bagTotals(items: Pick<BagItemRow, 'qtyNeeded' | 'qtyPacked'>[]) {
  return {
    needed: items.reduce((n, i) => n + i.qtyNeeded, 0),
    packed: items.reduce((n, i) => n + i.qtyPacked, 0),
    lines: items.length,
    linesDone: items.filter(i => i.qtyPacked >= i.qtyNeeded).length,
  }
}

// ---- pick plans: which lot (or stand-in) each line takes, in bin walk order ----

export interface PickRow {
  bagId: number
  itemId: number
  designators: string
  stageName: string
  stageOrder: number
  partId: number
  partName: string
  valueText: string | null
  standIn: boolean
  warning: string | null
  qty: number
  lotId: number | null
  binId: number | null
  binCode: string | null
  binPlace: string | null
  walkOrder: number
  lotNote: string | null
  short: number
}

interface SwapRules { groups: SwapGroup[], settings: ParametricSettings }
let rulesCache: { at: number, rules: SwapRules } | undefined
const RULES_TTL_MS = 5000

/** Swap groups and parametric settings, cached for a few seconds (the scan path asks on every bin). */
export async function loadSwapRules(db: AnyDb): Promise<SwapRules> {
  if (rulesCache && Date.now() - rulesCache.at < RULES_TTL_MS) return rulesCache.rules
  const [groups, members, settings] = await Promise.all([
    db.select().from(schema.swapGroups),
    db.select().from(schema.swapGroupMembers),
    db.select().from(schema.swapSettings),
  ])
  const on = (kind: string) => settings.find(s => s.kind === kind)?.enabled ?? DEFAULT_PARAMETRIC[kind as keyof ParametricSettings]
  const rules: SwapRules = {
    groups: groups.map(g => ({ id: String(g.id), name: g.name, warning: g.warning, members: members.filter(m => m.groupId === g.id).map(m => ({ partId: String(m.partId), direction: m.direction })) })),
    settings: { resistor: on('resistor'), capacitor: on('capacitor'), inductor: on('inductor') },
  }
  rulesCache = { at: Date.now(), rules }
  return rules
}

export function bagSwapPart(p: typeof schema.parts.$inferSelect): SwapPart {
  return {
    id: String(p.id), kind: p.kind, value: p.value, tolerancePct: p.tolerancePct, powerW: p.powerW, voltageV: p.voltageV,
    currentA: p.currentA, dielectric: p.dielectric, mounting: p.mounting, polarised: p.polarised, package: p.package,
  }
}

/** Whether `candidate` may stand in for `original` on a line, with the rule's warning. */
export function standInVerdict(rules: SwapRules, original: SwapPart, candidate: SwapPart, noStandIns: boolean) {
  return standInsFor(original.id, [original, candidate], rules.groups, rules.settings, { noStandIns }).find(s => s.partId === candidate.id) ?? null
}

function lotsOfParts(db: AnyDb, where: SQL) {
  return db.select({ lot: schema.lots, binCode: schema.bins.code, place: schema.bins.place, walkOrder: schema.bins.walkOrder })
    .from(schema.lots).innerJoin(schema.bins, eq(schema.bins.id, schema.lots.binId))
    .where(and(where, sql`${schema.lots.onHand} > 0`))
    .orderBy(asc(schema.lots.receivedOn), asc(schema.lots.id))
}

/** Pending packs per lot for the lots `l` matching a condition. */
export async function pendingWhere(db: AnyDb, lotCondition: SQL) {
  const [rows] = await db.execute(sql`select e.lot_id as lotId, cast(sum(e.qty) as signed) as qty from bag_events e
    join bags b on b.id = e.bag_id join lots l on l.id = e.lot_id
    where ${lotCondition} and e.kind = 'pack' and e.undone = 0 and b.state in ('open', 'packing') group by e.lot_id`)
  return new Map((rows as unknown as { lotId: number, qty: number }[]).map(r => [Number(r.lotId), Number(r.qty)]))
}

/**
 * The pick plan of some bags: for each line still to pack, the part to use (the order's reservation,
 * else the reconciliation of the bag against available stock) and the lot(s) to take it from, oldest
 * lot first; lots are shared out across the bags in order. Rows come in bin walk order.
 */
export async function planPicks(db: AnyDb, bagIds: number[], opts: { remainingOnly?: boolean, items?: BagItemRow[] } = {}) {
  const ids = bagIds.length ? bagIds : [0]
  // One round of queries: the parts in play are the bags' own parts and the parts their orders reserved.
  const inPlay = sql`(select i.part_id from bag_items i where i.bag_id in (${sql.join(ids.map(id => sql`${id}`), sql`, `)})
    union select r.part_id from reservations r join bags b on b.order_id = r.order_id where b.id in (${sql.join(ids.map(id => sql`${id}`), sql`, `)}))`
  const [headers, items, reservations, firstLots, firstParts, rules, firstPending] = await Promise.all([
    db.select({ id: schema.bags.id, orderId: schema.bags.orderId }).from(schema.bags).where(inArray(schema.bags.id, ids)),
    opts.items ?? loadBagItems(db, bagIds),
    db.select({ r: schema.reservations }).from(schema.reservations).innerJoin(schema.bags, eq(schema.bags.orderId, schema.reservations.orderId))
      .where(and(inArray(schema.bags.id, ids), inArray(schema.reservations.state, ['held', 'confirmed', 'consumed']))).then(rows => rows.map(x => x.r)),
    lotsOfParts(db, sql`${schema.lots.partId} in ${inPlay}`),
    db.select().from(schema.parts).where(sql`${schema.parts.id} in ${inPlay}`),
    loadSwapRules(db),
    pendingWhere(db, sql`l.part_id in ${inPlay}`),
  ])
  const orderOf = new Map(headers.map(h => [h.id, h.orderId]))
  const demand = await partDemand(db, items, orderOf, reservations, opts.remainingOnly !== false)
  let [lots, partRows, pending] = [firstLots, firstParts, firstPending]
  const extra = [...new Set(demand.map(d => d.partId))].filter(id => !partRows.some(p => p.id === id))
  if (extra.length) {
    // Only when reconciliation chose a stand-in nobody reserved.
    const [l2, p2, e2] = await Promise.all([lotsOfParts(db, inArray(schema.lots.partId, extra)), db.select().from(schema.parts).where(inArray(schema.parts.id, extra)), pendingWhere(db, sql`l.part_id in (${sql.join(extra.map(id => sql`${id}`), sql`, `)})`)])
    lots = [...lots, ...l2]
    partRows = [...partRows, ...p2]
    pending = new Map([...pending, ...e2])
  }
  const free = new Map(lots.map(l => [l.lot.id, l.lot.onHand - (pending.get(l.lot.id) ?? 0)]))
  const partById = new Map(partRows.map(p => [p.id, p]))
  const rows: PickRow[] = []
  for (const d of demand) {
    const item = d.item
    const part = partById.get(d.partId)
    const standIn = d.partId !== item.partId
    const verdict = standIn && part && partById.get(item.partId) ? standInVerdict(rules, bagSwapPart(partById.get(item.partId)!), bagSwapPart(part), false) : null
    const base = {
      bagId: item.bagId, itemId: item.itemId, designators: item.designators, stageName: item.stageName ?? 'Loose parts', stageOrder: item.stageOrder ?? 0,
      partId: d.partId, partName: part?.name ?? `part ${d.partId}`, valueText: part?.valueText ?? null, standIn, warning: verdict?.warning ?? null,
    }
    let left = d.qty
    for (const l of lots) {
      if (left === 0) break
      if (l.lot.partId !== d.partId) continue
      const take = Math.min(left, free.get(l.lot.id) ?? 0)
      if (take <= 0) continue
      free.set(l.lot.id, free.get(l.lot.id)! - take)
      left -= take
      rows.push({ ...base, qty: take, lotId: l.lot.id, binId: l.lot.binId, binCode: l.binCode, binPlace: l.place, walkOrder: l.walkOrder, lotNote: l.lot.supplierRef ?? l.lot.note, short: 0 })
    }
    if (left > 0) rows.push({ ...base, qty: left, lotId: null, binId: null, binCode: null, binPlace: null, walkOrder: Number.MAX_SAFE_INTEGER, lotNote: null, short: left })
  }
  rows.sort((a, b) => a.walkOrder - b.walkOrder || (a.binCode ?? '').localeCompare(b.binCode ?? '') || a.stageOrder - b.stageOrder || a.bagId - b.bagId || a.itemId - b.itemId)
  return { items, rows }
}

type Reservation = typeof schema.reservations.$inferSelect

/** What each line still needs, per part: reserved parts first (own part before stand-ins), reconcile for unreserved lines. */
async function partDemand(db: AnyDb, items: BagItemRow[], orderOf: Map<number, number>, reservations: Reservation[], remainingOnly: boolean) {
  const out: { item: BagItemRow, partId: number, qty: number }[] = []
  const unreserved: BagItemRow[] = []
  for (const item of items) {
    const need = remainingOnly ? item.qtyNeeded - item.qtyPacked : item.qtyNeeded
    if (need <= 0) continue
    const res = reservations.filter(r => r.orderId === orderOf.get(item.bagId) && r.lineId === item.lineId)
    if (!res.length) {
      unreserved.push(item)
      continue
    }
    const parts = [...res].sort((a, b) => Number(b.partId === item.partId) - Number(a.partId === item.partId))
    let skip = remainingOnly ? item.qtyPacked : 0
    let left = need
    for (const r of parts) {
      const usable = Math.max(0, r.qty - skip)
      skip = Math.max(0, skip - r.qty)
      const qty = Math.min(usable, left)
      if (qty > 0) out.push({ item, partId: r.partId, qty })
      left -= qty
    }
    if (left > 0) out.push({ item, partId: item.partId, qty: left })
  }
  if (unreserved.length) out.push(...await reconcileUnreserved(db, unreserved, remainingOnly))
  return out
}

/** Lines without a reservation (e.g. a bag made by hand): the reconciliation core picks own part or stand-in from available stock. */
async function reconcileUnreserved(db: AnyDb, items: BagItemRow[], remainingOnly: boolean) {
  const rules = await loadSwapRules(db)
  const kinds = [...new Set(items.map(i => i.kind))]
  const candidates = await db.select().from(schema.parts).where(inArray(schema.parts.kind, kinds))
  const swapParts = candidates.map(bagSwapPart)
  const out: { item: BagItemRow, partId: number, qty: number }[] = []
  for (const bagId of new Set(items.map(i => i.bagId))) {
    const mine = items.filter(i => i.bagId === bagId)
    const swaps = mine.flatMap(i => standInsFor(String(i.partId), swapParts, rules.groups, rules.settings, { noStandIns: i.noStandIns }).map(s => ({ from: String(i.partId), to: s.partId })))
    const partIds = [...new Set([...mine.map(i => i.partId), ...swaps.map(s => Number(s.to))])]
    const available = await availableByPart(db, partIds)
    const lines = mine.map(i => ({ id: String(i.itemId), partId: String(i.partId), qtyPerKit: remainingOnly ? i.qtyNeeded - i.qtyPacked : i.qtyNeeded, allowSwaps: !i.noStandIns }))
    const result = reconcile({ lines, stock: partIds.map(p => ({ partId: String(p), available: Math.max(0, available.get(p)?.available ?? 0) })), swaps: [...new Map(swaps.map(s => [`${s.from}>${s.to}`, s])).values()], kits: 1 })
    for (const a of result.allocation) if (a.qty > 0) out.push({ item: mine.find(i => String(i.itemId) === a.lineId)!, partId: Number(a.partId), qty: a.qty })
    for (const s of result.shortfall) out.push({ item: mine.find(i => String(i.itemId) === s.lineId)!, partId: Number(s.partId), qty: s.qty })
  }
  return out
}

// ---- labels ----

export type LabelKind = 'bags' | 'pouches' | 'both'

/** Bag labels (one per bag) and/or pouch labels (one per stage), each with the bag's signed QR URL. */
export async function bagLabels(db: AnyDb, bagIds: number[], kind: LabelKind, baseUrl: string, secret: string): Promise<Label[]> {
  const [headers, items] = await Promise.all([loadBagHeaders(db, { ids: bagIds }), loadBagItems(db, bagIds)])
  const labels: Label[] = []
  for (const h of headers) {
    const mine = items.filter(i => i.bagId === h.id)
    const pouches = pouchesOf(mine)
    const qrText = labelUrl(baseUrl, 'bag', h.code, secret)
    const code = signCode('bag', h.code, secret)
    const kit = `${h.kitName} rev ${h.revisionLabel}`
    const options = h.options.length ? h.options.join(', ') : 'no options'
    const seat = h.seat ? `seat ${h.seat} · ` : ''
    if (kind !== 'pouches') {
      const total = bagTotals(mine)
      labels.push({ qrText, code, tone: 'bag', title: h.builderName, lines: [kit, options, `${seat}${total.needed} items in ${pouches.length} pouch${pouches.length === 1 ? '' : 'es'}`, h.buildDayName] })
    }
    if (kind !== 'bags') {
      for (const p of pouches) {
        labels.push({ qrText, code, tone: 'pouch', title: `Pouch ${p.number}/${pouches.length}: ${p.name}`, lines: [h.builderName, kit, options, `${p.needed} items · ${p.items.length} lines`] })
      }
    }
  }
  return labels
}

/** Bin labels: the signed bin code, its place and the parts it holds. */
export async function binLabels(db: AnyDb, binCodes: string[] | 'all', baseUrl: string, secret: string): Promise<Label[]> {
  const bins = await db.select().from(schema.bins)
    .where(binCodes === 'all' ? undefined : inArray(schema.bins.code, binCodes.length ? binCodes : ['']))
    .orderBy(asc(schema.bins.walkOrder), asc(schema.bins.code))
  const lots = bins.length
    ? await db.select({ binId: schema.lots.binId, name: schema.parts.name }).from(schema.lots)
      .innerJoin(schema.parts, eq(schema.parts.id, schema.lots.partId))
      .where(inArray(schema.lots.binId, bins.map(b => b.id))).orderBy(asc(schema.lots.id))
    : []
  return bins.map((b) => {
    const names = [...new Set(lots.filter(l => l.binId === b.id).map(l => l.name))]
    return { qrText: labelUrl(baseUrl, 'bin', b.code, secret), code: signCode('bin', b.code, secret), tone: 'bin' as const, title: names[0] ?? 'Empty bin', lines: [...names.slice(1), b.place].filter(Boolean) }
  })
}

/** "1–4, 7, 9–10" from bag numbers. */
export function numberRanges(numbers: number[]): string {
  const sorted = [...new Set(numbers)].sort((a, b) => a - b)
  const parts: string[] = []
  for (let i = 0; i < sorted.length; i++) {
    let j = i
    while (j + 1 < sorted.length && sorted[j + 1] === sorted[j]! + 1) j++
    parts.push(j > i ? `${sorted[i]}–${sorted[j]}` : String(sorted[i]))
    i = j
  }
  return parts.join(', ')
}

/**
 * The batch view for packing many bags at once: one row per bin, part, pouch and quantity, with the
 * bags that take it ("put 2 × 4.7 kΩ from A-08 into each of bags 1–12"). Bags are numbered by seat.
 */
export async function batchPicks(db: AnyDb, bagIds: number[]) {
  const headers = await loadBagHeaders(db, { ids: bagIds })
  const { rows } = await planPicks(db, headers.map(h => h.id))
  const numberOf = new Map(headers.map((h, i) => [h.id, h.seat ?? i + 1]))
  const codeOf = new Map(headers.map(h => [h.id, h.code]))
  const groups = new Map<string, Omit<PickRow, 'bagId' | 'itemId' | 'designators'> & { bags: { code: string, number: number, designators: string }[] }>()
  for (const r of rows) {
    const key = `${r.lotId ?? 'short'}|${r.partId}|${r.stageName}|${r.qty}`
    let g = groups.get(key)
    if (!g) {
      const { bagId: _b, itemId: _i, designators: _d, ...rest } = r
      g = { ...rest, bags: [] }
      groups.set(key, g)
    }
    g.bags.push({ code: codeOf.get(r.bagId)!, number: numberOf.get(r.bagId)!, designators: r.designators })
  }
  const lines = [...groups.values()].map(g => ({ ...g, bagNumbers: numberRanges(g.bags.map(b => b.number)) }))
  return { bags: headers.map(h => ({ id: h.id, code: h.code, number: numberOf.get(h.id)!, builderName: h.builderName, kitName: h.kitName, options: h.options, state: h.state })), lines }
}
