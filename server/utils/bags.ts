import { and, asc, eq, isNull } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import { createError } from 'h3'
import * as schema from '../db/schema'
import { newBagCode } from './codes'
import { loadEffectiveBom } from './revision-bom'
import type { Tx } from './db'

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
