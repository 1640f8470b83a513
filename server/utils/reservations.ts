// Reserving stock and seats for orders. Every reservation is written by a transaction that first
// locks the build day row (seats) and then the lots of every part it may draw on (own parts and
// stand-ins), and reads availability at READ COMMITTED after taking those locks: two checkouts that
// could touch the same stock run one after the other, so stock is never promised twice.
import { and, eq, gt, inArray, isNotNull, ne, or, sql } from 'drizzle-orm'
import { createError } from 'h3'
import * as schema from '../db/schema'
import type { Db, Tx } from './db'
import { availableByPart, retryOnLockConflict } from './stock'
import { loadSwapGroups, loadSwapSettings, toSwapPart, valueNear } from './catalogue'
import { loadEffectiveBom } from './revision-bom'
import type { OptionGroup } from '../../shared/utils/bom'
import { reconcile, type ReconcileLine, type ReconcileLinePart, type ReconcileSwap } from '../../shared/utils/reconcile'
import { swapPairs } from '../../shared/utils/swaps'

export type OrderState = (typeof schema.ORDER_STATES)[number]

/** A kit choice turned into what reconcile needs: its lines, the swap rules that touch them and the parts to lock. */
export interface KitDemand {
  revisionId: number
  optionIds: number[]
  lines: ReconcileLine[]
  swaps: ReconcileSwap[]
  partIds: number[]
}

/** Runs fn in one READ COMMITTED transaction, retrying when MariaDB picks it as a deadlock victim. */
export function sellingTx<T>(db: Db, fn: (tx: Tx) => Promise<T>, attempts = 4): Promise<T> {
  return retryOnLockConflict(() => db.transaction(fn, { isolationLevel: 'read committed' }), { statusCode: 503, message: 'Many people are buying at once: please try again in a moment' }, attempts)
}

/**
 * The demand of one kit for a choice of options: effective BOM lines (own part, stand-ins allowed
 * unless the line says no) and the swap rules among the parts concerned. 400 on an invalid choice,
 * 409 when a line has no catalogue part yet.
 */
export async function kitDemand(db: Db, revisionId: number, optionIds: number[], swapRules?: ReconcileSwap[]): Promise<KitDemand> {
  let bom: Awaited<ReturnType<typeof loadEffectiveBom>>
  try {
    bom = await loadEffectiveBom(db, revisionId, optionIds)
  }
  catch (err) {
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: (err as Error).message, data: { fields: { optionIds: (err as Error).message } } })
  }
  const missing = bom.effective.filter(l => !l.partId)
  if (missing.length) {
    throw createError({ statusCode: 409, statusMessage: 'Not ready', message: `This kit cannot be sold yet: line ${missing.map(l => l.designators).join(', ')} has no catalogue part` })
  }
  const lines: ReconcileLine[] = bom.effective.map(l => ({ id: l.id, partId: l.partId!, qtyPerKit: l.qty, allowSwaps: !l.noStandIns }))
  const own = new Set(lines.map(l => l.partId))
  const swaps = (swapRules ?? await swapRulesFrom(db, [...own].map(Number))).filter(s => own.has(s.from)).map(s => ({ from: s.from, to: s.to }))
  const partIds = [...new Set([...own, ...swaps.map(s => s.to)])].map(Number).sort((a, b) => a - b)
  return { revisionId, optionIds, lines, swaps, partIds }
}

/**
 * The swap rules whose `from` is one of these parts: the same pairs as the whole catalogue's
 * swapPairs, found from only the parts that can be involved (the parts themselves, their group
 * partners, and parts of the same kind and value for the parametric rules).
 */
export async function swapRulesFrom(db: Db, partIds: number[]): Promise<ReconcileSwap[]> {
  if (!partIds.length) return []
  const P = schema.parts
  const [own, groups, settings] = await Promise.all([
    db.select().from(P).where(inArray(P.id, partIds)),
    loadSwapGroups(db),
    loadSwapSettings(db),
  ])
  const ids = new Set(partIds.map(String))
  const mine = groups.filter(g => g.members.some(m => ids.has(m.partId)))
  const partners = [...new Set(mine.flatMap(g => g.members.map(m => Number(m.partId))))]
  const near = own.filter(p => p.value != null).map(p => and(eq(P.kind, p.kind), valueNear(p.value!)))
  const where = or(inArray(P.id, partIds), partners.length ? inArray(P.id, partners) : undefined, ...near)
  const rows = await db.select().from(P).where(where)
  return swapPairs(rows.map(toSwapPart), mine, settings).filter(s => ids.has(s.from)).map(s => ({ from: s.from, to: s.to }))
}

/** Every valid choice of options within the allowed ones ('one' groups pick one, 'zero-or-one' may pick none). */
export function optionChoices(groups: OptionGroup[], allowed: number[], limit = 64): number[][] {
  let out: number[][] = [[]]
  for (const g of groups) {
    const opts = g.options.map(o => Number(o.id)).filter(id => allowed.includes(id))
    const picks: (number | null)[] = g.rule === 'one' ? opts : [null, ...opts]
    if (!picks.length) return []
    out = out.flatMap(prev => picks.map(p => (p === null ? prev : [...prev, p])))
    if (out.length > limit) return out.slice(0, limit)
  }
  return out
}

/** Locks the build day row for this transaction (every seat count and reservation at the day runs behind it). */
export async function lockBuildDay(tx: Tx, buildDayId: number) {
  const [day] = await tx.select().from(schema.buildDays).where(eq(schema.buildDays.id, buildDayId)).for('update')
  if (!day) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such build day' })
  return day
}

/** Locks every lot of these parts, in index order, so reservations and stock moves touching them serialise. */
export async function lockPartStock(tx: Tx, partIds: number[]) {
  if (!partIds.length) return
  await tx.select({ id: schema.lots.id }).from(schema.lots).where(inArray(schema.lots.partId, partIds))
    .orderBy(schema.lots.partId, schema.lots.id).for('update')
}

/** Seats taken at a build day: paid orders and pending ones whose hold is still live. */
export async function seatsTaken(tx: Pick<Tx, 'select'>, buildDayId: number, now = new Date(), exceptOrderId?: number) {
  const O = schema.orders
  const [row] = await tx.select({ n: sql<number>`count(*)` }).from(O).where(and(
    eq(O.buildDayId, buildDayId),
    or(eq(O.state, 'paid'), and(eq(O.state, 'pending'), gt(O.holdExpiresAt, now))),
    exceptOrderId ? ne(O.id, exceptOrderId) : undefined,
  ))
  return Number(row?.n ?? 0)
}

/**
 * One kit from the stock available now (caller holds the locks): the allocation per line and part,
 * or the shortfall when the stock cannot make it.
 */
export async function allocateKit(tx: Pick<Tx, 'select'>, demand: KitDemand): Promise<{ ok: true, allocation: ReconcileLinePart[] } | { ok: false, shortfall: ReconcileLinePart[] }> {
  const available = await availableByPart(tx, demand.partIds)
  const stock = demand.partIds.map(id => ({ partId: String(id), available: available.get(id)?.available ?? 0 }))
  const result = reconcile({ lines: demand.lines, stock, swaps: demand.swaps, kits: 1 })
  if (result.shortfall.length) return { ok: false, shortfall: result.shortfall }
  return { ok: true, allocation: result.allocation.filter(a => a.qty > 0) }
}

/** How many whole kits the available stock makes for this demand (no locks: a figure to show). */
export async function kitsAvailable(tx: Pick<Tx, 'select'>, demand: KitDemand) {
  if (!demand.lines.length) return 0
  const available = await availableByPart(tx, demand.partIds)
  const stock = demand.partIds.map(id => ({ partId: String(id), available: available.get(id)?.available ?? 0 }))
  return reconcile({ lines: demand.lines, stock, swaps: demand.swaps }).maxKits
}

/** Writes one reservation per line and part drawn on. */
export async function insertReservations(tx: Tx, orderId: number, allocation: ReconcileLinePart[], state: 'held' | 'confirmed') {
  if (!allocation.length) return
  await tx.insert(schema.reservations).values(allocation.map(a => ({ orderId, lineId: Number(a.lineId), partId: Number(a.partId), qty: a.qty, state })))
}

/**
 * Moves an order from one of `from` to `to` and releases its held or confirmed reservations, in
 * one guarded statement pair: true when this call made the change, false when another process (or
 * an earlier event) already had. A waiting-list offer held by the order lapses with it.
 */
export async function releaseOrder(tx: Tx, orderId: number, from: OrderState[], to: 'expired' | 'cancelled' | 'refunded', reason: string, now = new Date()) {
  const O = schema.orders
  const [res] = await tx.update(O).set({ state: to, cancelledAt: now, cancelReason: reason.slice(0, 255), seat: null })
    .where(and(eq(O.id, orderId), inArray(O.state, from)))
  if (res.affectedRows !== 1) return false
  await tx.update(schema.reservations).set({ state: 'released' })
    .where(and(eq(schema.reservations.orderId, orderId), inArray(schema.reservations.state, ['held', 'confirmed'])))
  await tx.update(schema.waitlist).set({ state: 'lapsed' })
    .where(and(eq(schema.waitlist.orderId, orderId), eq(schema.waitlist.state, 'offered')))
  return true
}

/** The smallest seat number not yet given to a paid order at the day (null when every seat is taken). */
export async function freeSeat(tx: Tx, buildDayId: number, seats: number) {
  const rows = await tx.select({ seat: schema.orders.seat }).from(schema.orders)
    .where(and(eq(schema.orders.buildDayId, buildDayId), eq(schema.orders.state, 'paid'), isNotNull(schema.orders.seat)))
  const used = new Set(rows.map(r => r.seat))
  for (let s = 1; s <= seats; s++) if (!used.has(s)) return s
  return null
}

/** Sentences naming what is short, for a sold-out message. */
export async function describeShortfall(tx: Pick<Tx, 'select'>, shortfall: ReconcileLinePart[]) {
  const ids = [...new Set(shortfall.map(s => Number(s.partId)))]
  const names = ids.length ? await tx.select({ id: schema.parts.id, name: schema.parts.name }).from(schema.parts).where(inArray(schema.parts.id, ids)) : []
  const nameOf = new Map(names.map(n => [String(n.id), n.name]))
  return shortfall.map(s => `${nameOf.get(s.partId) ?? `part ${s.partId}`} (${s.qty} short)`).join(', ')
}
