import { and, eq, gte, inArray, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { z } from 'zod'
import * as schema from '../db/schema'
import type { Tx } from './db'
import { isBinCode, looksLikeBareCode, readScan } from './codes'

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

/** The 409 for a movement that would take a lot below zero, as every stock write words it. */
export function notEnoughStock(s: { binCode: string, lotId: number, onHand: number, asked: number }) {
  return createError({ statusCode: 409, statusMessage: 'Not enough stock', message: `Bin ${s.binCode} holds only ${s.onHand} of lot ${s.lotId}; ${s.asked} were asked for`, data: { lotId: s.lotId, onHand: s.onHand, asked: s.asked } })
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
    throw notEnoughStock({ binCode: bin?.code ?? '?', lotId: m.lotId, onHand: lot.onHand, asked: -m.qty })
  }
  const [lot] = await tx.select({ partId: schema.lots.partId, binId: schema.lots.binId }).from(schema.lots).where(eq(schema.lots.id, m.lotId))
  await tx.insert(schema.ledger).values({
    lotId: m.lotId, partId: lot!.partId, binId: lot!.binId, kind: m.kind, qty: m.qty, userId: m.userId,
    reason: m.reason ?? null, orderId: m.orderId ?? null, bagId: m.bagId ?? null, reportId: m.reportId ?? null,
  })
}

/**
 * Writes many stock movements inside the caller's transaction in three statements whatever their number:
 * one guarded update of every lot (never below zero; it takes the lots' row locks in id order, so two
 * batches never wait on each other in a circle) and one insert of their ledger rows. The same guarantees
 * as moveStock, one lot at a time, for seals and unseals that touch every lot of a kit. The row locks are
 * held to the commit, so callers do this last in their transaction.
 */
export async function moveStockBatch(tx: Tx, moves: Movement[]) {
  const byLot = new Map<number, Movement>()
  for (const m of moves) {
    if (!Number.isInteger(m.qty) || m.qty === 0) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'A movement needs a whole, non-zero quantity' })
    if (byLot.has(m.lotId)) throw new Error(`moveStockBatch: lot ${m.lotId} appears twice`)
    byLot.set(m.lotId, m)
  }
  if (!byLot.size) return
  const ids = [...byLot.keys()].sort((a, b) => a - b)
  // A lot's part and bin never change, so this plain read needs no lock.
  const lots = await tx.select({ id: schema.lots.id, partId: schema.lots.partId, binId: schema.lots.binId }).from(schema.lots).where(inArray(schema.lots.id, ids))
  const found = new Map(lots.map(l => [l.id, l]))
  const missing = ids.find(id => !found.has(id))
  if (missing !== undefined) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No lot ${missing}` })
  const delta = sql`case ${schema.lots.id} ${sql.join(ids.map(id => sql`when ${id} then ${byLot.get(id)!.qty}`), sql` `)} end`
  const [res] = await tx.update(schema.lots).set({ onHand: sql`${schema.lots.onHand} + ${delta}` })
    .where(and(inArray(schema.lots.id, ids), sql`${schema.lots.onHand} + ${delta} >= 0`))
  if (res.affectedRows !== ids.length) {
    const now = await tx.select({ id: schema.lots.id, onHand: schema.lots.onHand, code: schema.bins.code }).from(schema.lots)
      .innerJoin(schema.bins, eq(schema.bins.id, schema.lots.binId)).where(inArray(schema.lots.id, ids))
    const short = now.find(l => l.onHand + byLot.get(l.id)!.qty < 0) ?? now[0]!
    throw notEnoughStock({ binCode: short.code, lotId: short.id, onHand: short.onHand, asked: -byLot.get(short.id)!.qty })
  }
  await tx.insert(schema.ledger).values(ids.map((id) => {
    const m = byLot.get(id)!
    const lot = found.get(id)!
    return {
      lotId: id, partId: lot.partId, binId: lot.binId, kind: m.kind, qty: m.qty, userId: m.userId,
      reason: m.reason ?? null, orderId: m.orderId ?? null, bagId: m.bagId ?? null, reportId: m.reportId ?? null,
    }
  }))
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

type Reader = Pick<Tx, 'select'>
type Runner = { transaction: <T>(fn: (tx: Tx) => Promise<T>) => Promise<T> }

const LOCK_ERRORS = new Set(['ER_LOCK_DEADLOCK', 'ER_LOCK_WAIT_TIMEOUT'])

/**
 * Runs fn, retrying a few times when MariaDB picks it as a deadlock victim or a lock wait times out;
 * after the last attempt such a failure becomes `busy` (409 unless said). For any work that locks
 * several rows in an order another transaction may not share.
 */
export async function retryOnLockConflict<T>(fn: () => Promise<T>, busy: { message: string, statusCode?: number }, attempts = 4): Promise<T> {
  for (let i = 1; ; i++) {
    try {
      return await fn()
    }
    catch (err) {
      const code = (err as { code?: string, cause?: { code?: string } }).cause?.code ?? (err as { code?: string }).code
      if (!code || !LOCK_ERRORS.has(code)) throw err
      if (i >= attempts) throw createError({ statusCode: busy.statusCode ?? 409, statusMessage: 'Busy', message: busy.message })
      await new Promise(r => setTimeout(r, 10 * i + Math.floor(Math.random() * 20)))
    }
  }
}

/**
 * Runs fn in one transaction, retrying it as a deadlock victim (two moves between the same two bins
 * in opposite directions lock the same lots in opposite order).
 */
export function runStockTx<T>(db: Runner, fn: (tx: Tx) => Promise<T>, attempts = 4): Promise<T> {
  return retryOnLockConflict(() => db.transaction(fn), { message: 'Someone else is moving this stock right now: try again' }, attempts)
}

function bad(message: string, field?: string): never {
  throw createError({ statusCode: 400, statusMessage: 'Invalid input', message, data: field ? { fields: { [field]: message } } : undefined })
}

/** A bin by id, or a 400 naming the field (for forms that send a bin id). */
export async function binOrRefuse(tx: Reader, binId: number, field = 'binId') {
  const [bin] = await tx.select().from(schema.bins).where(eq(schema.bins.id, binId))
  if (!bin) bad(`There is no bin ${binId}: add it on the Bins page first`, field)
  return bin
}

export interface Receipt {
  binId: number
  partId: number
  qty: number
  unitCostMinor: number
  currency: string
  supplier?: string | null
  supplierRef?: string | null
  receivedOn: string
  note?: string | null
}

/** Receives a new lot into a bin: the lot row and its 'receive' ledger row, in the caller's transaction. */
export async function receiveLot(tx: Tx, r: Receipt, userId: number | null) {
  await binOrRefuse(tx, r.binId)
  const [part] = await tx.select({ id: schema.parts.id }).from(schema.parts).where(eq(schema.parts.id, r.partId))
  if (!part) bad(`There is no part ${r.partId} in the catalogue`, 'partId')
  const [row] = await tx.insert(schema.lots).values({
    partId: r.partId, binId: r.binId, qtyReceived: r.qty, onHand: 0, unitCostMinor: r.unitCostMinor, currency: r.currency,
    supplier: r.supplier || null, supplierRef: r.supplierRef || null, receivedOn: r.receivedOn, note: r.note || null,
  }).$returningId()
  await moveStock(tx, { lotId: row!.id, qty: r.qty, kind: 'receive', userId, reason: r.note || 'Received' })
  return row!.id
}

export interface LotMove { lotId: number, toBinId: number, qty: number, userId: number | null, reason?: string | null }

/**
 * Moves part of a lot to another bin in the caller's transaction: 'move-out' of the source lot,
 * 'move-in' to the target bin's lot of the same part, cost, supplier and receipt date (made when
 * there is none, so costing by receipt date still holds). The target bin's row is locked while
 * the lot is looked up, so two moves into one bin never make twin lots.
 */
export async function moveLot(tx: Tx, m: LotMove) {
  if (!Number.isInteger(m.qty) || m.qty <= 0) bad('Move a whole number of parts, 1 or more', 'qty')
  const [src] = await tx.select().from(schema.lots).where(eq(schema.lots.id, m.lotId))
  if (!src) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no lot ${m.lotId}` })
  if (src.binId === m.toBinId) bad('The lot is already in that bin: choose another bin', 'toBin')
  const reason = m.reason || null
  await moveStock(tx, { lotId: src.id, qty: -m.qty, kind: 'move-out', userId: m.userId, reason })
  const [bin] = await tx.select().from(schema.bins).where(eq(schema.bins.id, m.toBinId)).for('update')
  if (!bin) bad(`There is no bin ${m.toBinId}: add it on the Bins page first`, 'toBin')
  const L = schema.lots
  const [twin] = await tx.select({ id: L.id }).from(L).where(and(
    eq(L.binId, bin.id), eq(L.partId, src.partId), eq(L.unitCostMinor, src.unitCostMinor), eq(L.currency, src.currency),
    sql`${L.supplier} <=> ${src.supplier}`, sql`${L.supplierRef} <=> ${src.supplierRef}`, eq(L.receivedOn, src.receivedOn),
  )).orderBy(L.id).limit(1).for('update')
  let toLotId = twin?.id
  if (!toLotId) {
    const [row] = await tx.insert(L).values({
      partId: src.partId, binId: bin.id, qtyReceived: 0, onHand: 0, unitCostMinor: src.unitCostMinor, currency: src.currency,
      supplier: src.supplier, supplierRef: src.supplierRef, receivedOn: src.receivedOn, note: `Moved from lot ${src.id}`,
    }).$returningId()
    toLotId = row!.id
  }
  await moveStock(tx, { lotId: toLotId, qty: m.qty, kind: 'move-in', userId: m.userId, reason })
  return { fromLotId: src.id, toLotId, toBinId: bin.id, qty: m.qty }
}

export interface BinCount { lotId: number, expected: number, counted: number }

/**
 * Applies a count sheet: for each lot whose counted quantity differs from its on-hand, a 'count'
 * ledger row for the difference. `expected` is what the sheet showed; when the lot has changed
 * since, the count is refused (409) so nobody overwrites a movement they did not see.
 */
export async function countBin(tx: Tx, c: { binId: number, counts: BinCount[], reason: string, userId: number | null }) {
  const bin = await binOrRefuse(tx, c.binId)
  if (!c.counts.length) return []
  const ids = c.counts.map(x => x.lotId)
  if (new Set(ids).size !== ids.length) bad('A lot is listed twice on the count sheet', 'counts')
  const lots = await tx.select({ id: schema.lots.id, binId: schema.lots.binId, onHand: schema.lots.onHand })
    .from(schema.lots).where(inArray(schema.lots.id, ids)).orderBy(schema.lots.id).for('update')
  const byId = new Map(lots.map(l => [l.id, l]))
  const adjustments: { lotId: number, from: number, to: number, qty: number }[] = []
  for (const x of c.counts) {
    const lot = byId.get(x.lotId)
    if (!lot || lot.binId !== bin.id) bad(`Lot ${x.lotId} is not in bin ${bin.code}`, 'counts')
    if (lot.onHand !== x.expected) {
      throw createError({
        statusCode: 409, statusMessage: 'Stock changed',
        message: `Lot ${x.lotId} changed while you counted: the sheet showed ${x.expected}, the ledger now says ${lot.onHand}. Reload the count sheet and count that lot again.`,
        data: { lotId: x.lotId, expected: x.expected, onHand: lot.onHand },
      })
    }
    if (x.counted === lot.onHand) continue
    if (c.reason.trim().length < 3) bad('Say why the count differs, in a few words', 'reason')
    const qty = x.counted - lot.onHand
    await moveStock(tx, { lotId: lot.id, qty, kind: 'count', userId: c.userId, reason: c.reason })
    adjustments.push({ lotId: lot.id, from: lot.onHand, to: x.counted, qty })
  }
  return adjustments
}

/**
 * Everything wrong with stock, as sentences (empty when sound): a lot whose cached on-hand differs
 * from its ledger sum, a negative on-hand, a lot whose ledger ever ran below zero (rows in id order),
 * and ledger rows naming another part or bin than their lot. For tests and health checks.
 */
export async function checkStockInvariants(db: Reader): Promise<string[]> {
  const problems: string[] = []
  const sums = await db.select({
    id: schema.lots.id, onHand: schema.lots.onHand,
    ledger: sql<number>`cast(coalesce(sum(${schema.ledger.qty}), 0) as signed)`,
  }).from(schema.lots).leftJoin(schema.ledger, eq(schema.ledger.lotId, schema.lots.id)).groupBy(schema.lots.id, schema.lots.onHand)
  for (const s of sums) {
    if (s.onHand < 0) problems.push(`Lot ${s.id} holds ${s.onHand} (below zero)`)
    if (Number(s.ledger) !== s.onHand) problems.push(`Lot ${s.id} says ${s.onHand} on hand but its ledger adds up to ${Number(s.ledger)}`)
  }
  const G = schema.ledger
  const running = db.select({
    lotId: G.lotId,
    running: sql<number>`sum(${G.qty}) over (partition by ${G.lotId} order by ${G.id})`.as('running'),
  }).from(G).as('running_sums')
  const dips = await db.select({ lotId: running.lotId, low: sql<number>`cast(min(${running.running}) as signed)` })
    .from(running).groupBy(running.lotId).having(sql`min(${running.running}) < 0`)
  for (const d of dips) problems.push(`Lot ${d.lotId}'s ledger runs below zero (to ${Number(d.low)})`)
  const strays = await db.select({ id: schema.ledger.id, lotId: schema.ledger.lotId }).from(schema.ledger)
    .innerJoin(schema.lots, eq(schema.lots.id, schema.ledger.lotId))
    .where(sql`${schema.ledger.partId} <> ${schema.lots.partId} or ${schema.ledger.binId} <> ${schema.lots.binId}`)
  for (const s of strays) problems.push(`Ledger row ${s.id} names another part or bin than lot ${s.lotId}`)
  return problems
}

/**
 * The bin a scan or a typed code names: a signed label (URL, path or token, checked against the
 * label secret) or a bare bin code typed by hand. 400 for a bag label or a bad signature, 404 for
 * a code no bin has.
 */
export async function findBinByScan(db: Reader, text: string, secret: string) {
  const typed = text.trim().toUpperCase()
  let code: string
  if (looksLikeBareCode(typed) && isBinCode(typed)) {
    code = typed
  }
  else {
    const read = readScan(text, secret)
    if ('error' in read) bad(`That is not a bin: ${read.error}`, 'bin')
    if (read.kind !== 'bin') bad('That is a bag label, not a bin label: scan the label on the bin', 'bin')
    code = read.code
  }
  const [bin] = await db.select().from(schema.bins).where(eq(schema.bins.code, code))
  if (!bin) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no bin ${code}: add it on the Bins page first`, data: { fields: { bin: `There is no bin ${code}` } } })
  return bin
}

/** A bin as the bins form sends it: the code is upper-cased and must read back from a label. */
export const binBody = z.object({
  code: z.string({ error: 'Give the bin a code' }).trim().toUpperCase().min(1, 'Give the bin a code, e.g. A-03')
    .refine(isBinCode, 'Use 1–16 letters, digits and dashes inside, e.g. A-03')
    .refine(looksLikeBareCode, 'A code ending in a dash and 8 characters would read as a label signature: shorten it'),
  place: z.string().trim().max(160, 'Keep the place under 160 characters').default(''),
  walkOrder: z.coerce.number({ error: 'Give a number' }).int('Use a whole number').min(0, 'Use 0 or more').max(1_000_000).default(0),
})

/** True for MariaDB's duplicate-key error (a unique index refused the row). */
export function isDuplicateKey(err: unknown): boolean {
  const e = err as { code?: string, cause?: { code?: string } }
  return (e?.cause?.code ?? e?.code) === 'ER_DUP_ENTRY'
}
