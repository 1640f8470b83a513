import { and, eq, gte, inArray, sql } from 'drizzle-orm'
import { createError } from 'h3'
import * as schema from '../db/schema'
import type { Tx } from './db'

export type LedgerKind = (typeof schema.LEDGER_KINDS)[number]

export interface Movement {
  lotId: number
  /** Signed: negative takes stock out of the lot. */
  qty: number
  kind: LedgerKind
  userId: number | null
  reason?: string | null
  orderId?: number | null
  bagId?: number | null
  reportId?: number | null
}

/**
 * Writes one stock movement inside the caller's transaction: a guarded update of the lot's cached
 * on-hand (never below zero) and its append-only ledger row. Throws 409 when the lot would go negative,
 * which rolls the whole transaction back.
 */
export async function moveStock(tx: Tx, m: Movement) {
  if (!Number.isInteger(m.qty) || m.qty === 0) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'A movement needs a whole, non-zero quantity' })
  const where = m.qty < 0
    ? and(eq(schema.lots.id, m.lotId), gte(schema.lots.onHand, -m.qty))
    : eq(schema.lots.id, m.lotId)
  const [res] = await tx.update(schema.lots).set({ onHand: sql`${schema.lots.onHand} + ${m.qty}` }).where(where)
  if (res.affectedRows !== 1) {
    const [lot] = await tx.select({ onHand: schema.lots.onHand, binId: schema.lots.binId }).from(schema.lots).where(eq(schema.lots.id, m.lotId))
    if (!lot) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No lot ${m.lotId}` })
    const [bin] = await tx.select({ code: schema.bins.code }).from(schema.bins).where(eq(schema.bins.id, lot.binId))
    throw createError({ statusCode: 409, statusMessage: 'Not enough stock', message: `Bin ${bin?.code ?? '?'} holds only ${lot.onHand} of lot ${m.lotId}; ${-m.qty} were asked for`, data: { lotId: m.lotId, onHand: lot.onHand, asked: -m.qty } })
  }
  const [lot] = await tx.select({ partId: schema.lots.partId, binId: schema.lots.binId }).from(schema.lots).where(eq(schema.lots.id, m.lotId))
  await tx.insert(schema.ledger).values({
    lotId: m.lotId, partId: lot!.partId, binId: lot!.binId, kind: m.kind, qty: m.qty, userId: m.userId,
    reason: m.reason ?? null, orderId: m.orderId ?? null, bagId: m.bagId ?? null, reportId: m.reportId ?? null,
  })
}

/**
 * Available stock per part: on hand in every lot, minus reservations that are held or confirmed
 * (consumed reservations are already out of the lots; released ones count for nothing).
 */
export async function availableByPart(tx: Pick<Tx, 'select'>, partIds?: number[]) {
  const onHand = await tx.select({ partId: schema.lots.partId, qty: sql<number>`cast(sum(${schema.lots.onHand}) as signed)` })
    .from(schema.lots).where(partIds?.length ? inArray(schema.lots.partId, partIds) : undefined).groupBy(schema.lots.partId)
  const reserved = await tx.select({ partId: schema.reservations.partId, qty: sql<number>`cast(sum(${schema.reservations.qty}) as signed)` })
    .from(schema.reservations)
    .where(and(inArray(schema.reservations.state, ['held', 'confirmed']), partIds?.length ? inArray(schema.reservations.partId, partIds) : undefined))
    .groupBy(schema.reservations.partId)
  const map = new Map<number, { onHand: number, reserved: number, available: number }>()
  for (const r of onHand) map.set(r.partId, { onHand: Number(r.qty), reserved: 0, available: Number(r.qty) })
  for (const r of reserved) {
    const e = map.get(r.partId) ?? { onHand: 0, reserved: 0, available: 0 }
    e.reserved = Number(r.qty)
    e.available = e.onHand - e.reserved
    map.set(r.partId, e)
  }
  return map
}
