import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm'
import { format } from 'mysql2'
import { createError, setResponseHeader, setResponseHeaders, setResponseStatus, type H3Event } from 'h3'
import { z } from 'zod'
import * as schema from '../db/schema'
import { bagSwapPart, bagTotals, COUNTED_SINGLY, headersFromRows, loadBagHeaders, loadBagItems, loadSwapRules, oneBagReadSql, pouchesOf, rawHeaderRow, rawItemRows, standInVerdict, type BagItemRow } from './bags'
import { isBagCode, looksLikeBareCode, readScan } from './codes'
import { SHEET_LAYOUTS, validateLayout, type SheetLayout } from './labels'
import { moveStockBatch, notEnoughStock, retryOnLockConflict } from './stock'
import { useBatchPool, type Db, type Tx } from './db'

/** A claim on a bag lapses after this long without a scan (KW_CLAIM_MINUTES, default 10). */
export const CLAIM_LAPSE_SECONDS = Math.max(30, Math.round((Number(process.env.KW_CLAIM_MINUTES) || 10) * 60))

// The packing station's statements share these pieces of SQL text (`?` placeholders, filled by mysql2).
/** A bag that user may claim: free, already theirs, or their claim lapsed. Parameters: bag id, user id. */
const CLAIMABLE = `id = ? and state in ('open', 'packing') and (claimed_by is null or claimed_by = ? or claimed_at < now() - interval ${CLAIM_LAPSE_SECONDS} second)`
/** Claims (or renews the claim on) a bag. Parameters: user id, bag id, user id. */
const CLAIM_SQL = `update bags set claimed_by = ?, claimed_at = now(), state = 'packing' where ${CLAIMABLE}`
/**
 * A packer packs one bag at a time: lets go of their other bags, back to "not started" when nothing
 * is in them (found through the index on claimed_by). Parameters: user id, the bag to keep (or 0).
 */
const RELEASE_OTHERS_SQL = `update bags b set b.claimed_by = null, b.claimed_at = null,
    b.state = if(exists(select 1 from bag_items i where i.bag_id = b.id and i.qty_packed > 0), 'packing', 'open')
  where b.claimed_by = ? and b.id <> ? and b.state in ('open', 'packing')`
/**
 * What unsealed bags hold of a lot (`lot`: an SQL expression for its id). Only ever inside a plain
 * SELECT: in read committed that is a consistent read, while `SET @v = (subquery)` would take shared
 * locks on other packers' rows and deadlock with them.
 */
const heldOfLot = (lot: string) => `select coalesce(sum(e.qty), 0) from bag_events e join bags g on g.id = e.bag_id
  where e.lot_id = ${lot} and e.kind = 'pack' and e.undone = 0 and g.state in ('open', 'packing')`

export type RefusalReason = 'not-a-label' | 'unknown' | 'other-day' | 'order' | 'sealed' | 'claimed' | 'no-bag' | 'wrong-bin'
  | 'line-done' | 'over-count' | 'bin-short' | 'nothing-to-undo' | 'incomplete' | 'not-sealed'

const STATUS_TEXT: Record<number, string> = { 400: 'Not a label', 404: 'Not found', 409: 'Refused', 423: 'Claimed by another packer' }

function refuse(statusCode: number, reason: RefusalReason, message: string, extra: Record<string, unknown> = {}) {
  return createError({ statusCode, statusMessage: STATUS_TEXT[statusCode] ?? 'Refused', message, data: { reason, ...extra } })
}

export interface Packer { id: number, name: string }
export interface ScanInput { text: string, buildDayId: number, bagId?: number, itemId?: number, qty?: number, confirmStandIn?: boolean }
export type BagView = Awaited<ReturnType<typeof bagView>>

/** The bag as the station shows it: header, pouches with lines and suggested bins, totals, the scan undo would take back. */
export async function bagView(db: Db, bagId: number, known?: Header) {
  const [[bag], items, stock, lastPack] = await Promise.all([
    known ? [known] : loadBagHeaders(db, { ids: [bagId] }, CLAIM_LAPSE_SECONDS),
    loadBagItems(db, [bagId]),
    binStock(db, bagId),
    lastPackEvent(db, bagId),
  ])
  if (!bag) throw refuse(404, 'unknown', 'There is no such bag')
  return { bag, pouches: pouchesOf(items, suggestedBins(items, stock)), totals: bagTotals(items), lastPack, claimLapseSeconds: CLAIM_LAPSE_SECONDS }
}

/** What the bin suggestions need, in two small queries: the order's reservations, and the lots in stock of every part in play. */
async function binStock(db: Db, bagId: number) {
  const [[reserved], [lots]] = await Promise.all([
    db.execute(sql`select r.line_id as lineId, r.part_id as partId from bags g join reservations r on r.order_id = g.order_id
      where g.id = ${bagId} and r.state in ('held', 'confirmed', 'consumed')`),
    // The parts in play first (a small derived table), then their lots by the part index.
    db.execute(sql`select l.id as lotId, l.part_id as partId, l.received_on as receivedOn, b.code as code
      from (select i.part_id from bag_items i where i.bag_id = ${bagId}
        union select r.part_id from bags g join reservations r on r.order_id = g.order_id where g.id = ${bagId}) p
      join lots l on l.part_id = p.part_id and l.on_hand > 0 join bins b on b.id = l.bin_id`),
  ])
  return {
    reserved: reserved as unknown as { lineId: number, partId: number }[],
    lots: lots as unknown as { lotId: number, partId: number, receivedOn: string, code: string }[],
  }
}

/**
 * Bins to suggest for each open line: bins holding the part the order reserved for the line first,
 * then the line's own part, oldest lot first. (The pick list does the full allocation.)
 */
function suggestedBins(items: BagItemRow[], stock: Awaited<ReturnType<typeof binStock>>) {
  const lotsOf = new Map<number, typeof stock.lots>()
  for (const l of stock.lots) lotsOf.set(Number(l.partId), [...(lotsOf.get(Number(l.partId)) ?? []), l])
  const out = new Map<number, string[]>()
  for (const item of items) {
    if (item.qtyPacked >= item.qtyNeeded) continue
    const wanted = [
      ...stock.reserved.filter(r => Number(r.lineId) === item.lineId).map(r => ({ partId: Number(r.partId), reserved: 1, own: Number(r.partId) === item.partId ? 1 : 0 })),
      { partId: item.partId, reserved: 0, own: 1 },
    ]
    const byBin = new Map<string, { reserved: number, own: number, receivedOn: string, lotId: number }>()
    for (const w of wanted) {
      for (const l of lotsOf.get(w.partId) ?? []) {
        const b = byBin.get(l.code)
        const receivedOn = String(l.receivedOn)
        if (!b) byBin.set(l.code, { reserved: w.reserved, own: w.own, receivedOn, lotId: Number(l.lotId) })
        else {
          b.reserved = Math.max(b.reserved, w.reserved)
          b.own = Math.max(b.own, w.own)
          if (receivedOn < b.receivedOn) b.receivedOn = receivedOn
          b.lotId = Math.min(b.lotId, Number(l.lotId))
        }
      }
    }
    const codes = [...byBin].sort(([, a], [, b]) => b.reserved - a.reserved || b.own - a.own || (a.receivedOn < b.receivedOn ? -1 : a.receivedOn > b.receivedOn ? 1 : 0) || a.lotId - b.lotId).map(([code]) => code)
    if (codes.length) out.set(item.itemId, codes)
  }
  return out
}

async function lastPackEvent(db: Db, bagId: number) {
  const E = schema.bagEvents
  const [ev] = await db.select({ id: E.id, qty: E.qty, itemId: E.bagItemId, binCode: schema.bins.code, partName: schema.parts.name, at: E.createdAt })
    .from(E).leftJoin(schema.bins, eq(schema.bins.id, E.binId)).leftJoin(schema.parts, eq(schema.parts.id, E.partId))
    .where(and(eq(E.bagId, bagId), eq(E.kind, 'pack'), eq(E.undone, 0))).orderBy(desc(E.id)).limit(1)
  return ev ?? null
}

/**
 * One scan at the packing station. A bag label claims the bag; a bin label packs into the current bag
 * the line its part (or an allowed stand-in) serves, or asks the packer to confirm a count or a stand-in
 * first. Every refusal is recorded on the bag it concerns and thrown with `data.reason`.
 */
export async function scan(db: Db, packer: Packer, input: ScanInput, secret: string) {
  let concerns = input.bagId
  try {
    const read = readScan(input.text, secret)
    if ('error' in read) {
      const typed = input.text.trim()
      throw refuse(400, 'not-a-label', looksLikeBareCode(typed)
        ? `"${typed.toUpperCase()}" is only the code: type the whole text under the QR code, with the 8 characters after the dash`
        : `${read.error[0]!.toUpperCase()}${read.error.slice(1)}.`)
    }
    if (read.kind === 'bag') {
      const [h] = await loadBagHeaders(db, { codes: [read.code] }, CLAIM_LAPSE_SECONDS)
      concerns = h?.id
      return await scanBag(db, packer, read.code, h, input.buildDayId)
    }
    return await scanBin(db, packer, read.code, input)
  }
  catch (err) {
    if (concerns) await recordRefusal(db, concerns, packer.id, err)
    throw err
  }
}

async function recordRefusal(db: Db, bagId: number, userId: number, err: unknown) {
  const e = err as { statusCode?: number, message?: string }
  if (!e.statusCode || e.statusCode >= 500) return
  try {
    await db.insert(schema.bagEvents).values({ bagId, kind: 'refused', userId, note: (e.message ?? 'refused').slice(0, 255) })
  }
  catch { /* the refusal itself is what the packer needs; its audit row is best effort */ }
}

type Header = Awaited<ReturnType<typeof loadBagHeaders>>[number]

function checkBag(h: Header | undefined, code: string, buildDayId: number, packerId: number): asserts h is Header {
  if (!h) throw refuse(404, 'unknown', `Bag ${code} is not in Kitwright: set it aside and tell an organiser`)
  if (h.buildDayId !== buildDayId)
    throw refuse(409, 'other-day', `Bag ${h.code} belongs to ${h.buildDayName} (${h.buildDayDate}), not to the build day this station is packing`, { bagId: h.id })
  if (h.state === 'sealed' || h.state === 'collected')
    throw refuse(409, 'sealed', `Bag ${h.code} is already sealed${h.sealedByName ? ` (by ${h.sealedByName})` : ''}: an organiser can unseal it from the bag's page`, { bagId: h.id })
  if (h.orderState !== 'paid')
    throw refuse(409, 'order', `The order for bag ${h.code} is ${h.orderState}: put the bag aside and tell an organiser`, { bagId: h.id })
  if (h.claim && h.claim.userId !== packerId) throw claimedBy(h.code, h.claim.name)
}

function claimedBy(code: string, name: string) {
  return refuse(423, 'claimed', `${name} is packing bag ${code}. Their claim lapses after ${Math.round(CLAIM_LAPSE_SECONDS / 60)} minutes without a scan.`)
}

async function scanBag(db: Db, packer: Packer, code: string, h: Header | undefined, buildDayId: number) {
  checkBag(h, code, buildDayId, packer.id)
  if (!await claimInOneTrip(packer.id, h.id)) throw await claimRefusal(db, h.id)
  // The header just read, with the claim just taken: no need to read it again.
  const claimed: Header = { ...h, state: 'packing', claimedBy: packer.id, claimedAt: new Date(), claim: { userId: packer.id, name: packer.name, at: new Date() } }
  return { outcome: 'bag' as const, bag: await bagView(db, h.id, claimed) }
}

/**
 * A packer's claim on a bag, in one transaction and one round trip: claim it (free, already theirs,
 * or lapsed), let go of any other bag they held (back to "not started" when nothing is in it), and
 * record the claim; false when the bag could not be claimed, and then nothing was written.
 */
async function claimInOneTrip(userId: number, bagId: number) {
  const results = await runBatch(`set @kw_claimed = 0;
set transaction isolation level read committed;
start transaction;
${CLAIM_SQL};
set @kw_claimed = row_count();
${RELEASE_OTHERS_SQL} and @kw_claimed = 1;
insert into bag_events (bag_id, kind, user_id) select ?, 'claim', ? from dual where @kw_claimed = 1;
commit;
select @kw_claimed as claimed;`, [userId, bagId, userId, userId, bagId, bagId, userId])
  return Number((results.at(-1) as { claimed: number | string }[])[0]!.claimed) === 1
}

/** Claims (or renews the claim on) a bag inside the caller's transaction; the row lock serialises every write to the bag. */
async function claim(tx: Tx, bagId: number, userId: number) {
  const [res] = await tx.execute(sql.raw(format(CLAIM_SQL, [userId, bagId, userId])))
  if ((res as unknown as { affectedRows: number }).affectedRows === 1) return
  throw await claimRefusal(tx as unknown as Db, bagId)
}

/** Why a bag cannot be claimed now: gone, just sealed, or another packer's. */
async function claimRefusal(db: Db, bagId: number) {
  const [h] = await loadBagHeaders(db, { ids: [bagId] }, CLAIM_LAPSE_SECONDS)
  if (!h) return refuse(404, 'unknown', 'There is no such bag')
  if (h.state === 'sealed' || h.state === 'collected') return refuse(409, 'sealed', `Bag ${h.code} has just been sealed`, { bagId })
  return claimedBy(h.code, h.claim?.name ?? 'Another packer')
}

/** Lets go of a bag (the packer's "done for now"). */
export async function releaseBag(db: Db, bagId: number, packer: Packer) {
  await db.transaction(async (tx) => {
    await claim(tx, bagId, packer.id)
    await tx.execute(sql.raw(format(RELEASE_OTHERS_SQL, [packer.id, 0])))
    await tx.insert(schema.bagEvents).values({ bagId, kind: 'release', userId: packer.id })
  })
  return bagView(db, bagId)
}

interface Candidate { item: BagItemRow, partId: number, partName: string, standIn: { warning: string | null } | null }

/** A bin with its lots (oldest first) and, per lot, what unsealed bags already hold of it. */
const BIN_LOTS_SQL = `select b.id as binId, l.id as lotId, l.part_id as partId, l.on_hand as onHand,
      (${heldOfLot('l.id')}) as pending
    from bins b left join lots l on l.bin_id = b.id where b.code = ? order by l.received_on, l.id`

function binFromRows(list: { binId: number, lotId: number | null, partId: number | null, onHand: number | null, pending: number | string }[]) {
  if (!list.length) return null
  return {
    id: Number(list[0]!.binId),
    lots: list.flatMap(r => (r.lotId == null ? [] : [{ id: Number(r.lotId), partId: Number(r.partId), onHand: Number(r.onHand), pending: Number(r.pending) }])),
  }
}
type BinLot = NonNullable<ReturnType<typeof binFromRows>>['lots'][number]

/**
 * What a bin scan needs, in one round trip: the bag's header and items and the bin's lots with what
 * unsealed bags hold of each (three statements sent together; the same shapes as loadBagHeaders,
 * loadBagItems and the bin read).
 */
async function readForBinScan(db: Db, bagId: number, code: string) {
  const q = oneBagReadSql(CLAIM_LAPSE_SECONDS)
  const [results] = await useBatchPool().query(`${q.header};\n${q.items};\n${BIN_LOTS_SQL};`, [bagId, bagId, code]) as unknown as [[Record<string, unknown>[], Record<string, unknown>[], Parameters<typeof binFromRows>[0]]]
  const [headers, items, bin] = results
  const [h] = await headersFromRows(db as unknown as Parameters<typeof headersFromRows>[0], headers.map(rawHeaderRow))
  return { h, items: rawItemRows(items), bin: binFromRows(bin) }
}

async function scanBin(db: Db, packer: Packer, code: string, input: ScanInput) {
  try {
    return await scanBinOnce(db, packer, code, input)
  }
  catch (err) {
    // Another packer took the chosen lot's last free parts between our read and our lock: read again,
    // once, so a bin with another lot of the part packs from that one instead of being refused.
    if ((err as { data?: { raced?: boolean } }).data?.raced) return await scanBinOnce(db, packer, code, input)
    throw err
  }
}

async function scanBinOnce(db: Db, packer: Packer, code: string, input: ScanInput) {
  if (!input.bagId) throw refuse(409, 'no-bag', `That is bin ${code}: scan a bag's label first`)
  const bagId = input.bagId
  const { h, bin, items } = await readForBinScan(db, bagId, code)
  checkBag(h, `#${bagId}`, input.buildDayId, packer.id)
  if (!bin) throw refuse(404, 'unknown', `Bin ${code} is not in Kitwright: check its label`)
  const binPartIds = bin.lots.map(l => l.partId)
  const candidates = await binCandidates(db, items, binPartIds, input.itemId)
  if (!candidates.length) throw await wrongBin(db, code, items, binPartIds, input.itemId)
  const pick = candidates[0]!
  const remaining = pick.item.qtyNeeded - pick.item.qtyPacked
  const prompt = { item: pick.item, binCode: code, partId: pick.partId, partName: pick.partName, standIn: pick.standIn, remaining }

  if (pick.standIn && pick.item.standInPartId !== pick.partId && !input.confirmStandIn)
    return { outcome: 'stand-in' as const, ...prompt, qty: countsSingly(pick.item) ? 1 : remaining }
  const qty = input.qty ?? (countsSingly(pick.item) || remaining === 1 ? 1 : null)
  if (qty === null) return { outcome: 'count' as const, ...prompt, qty: remaining }
  if (qty > remaining)
    throw refuse(409, 'over-count', `${pick.item.designators} needs ${remaining} more; ${qty} is too many. Put back ${qty - remaining}.`, { itemId: pick.item.itemId, remaining })

  const lot = chooseLot(bin.lots.filter(l => l.partId === pick.partId), qty, code, pick.partName)
  const standIn = pick.standIn ? { warning: pick.standIn.warning?.slice(0, 255) ?? null } : null
  const done = await packInOneTrip(db, { bagId: h.id, itemId: pick.item.itemId, lotId: lot.id, binId: bin.id, partId: pick.partId, qty, userId: packer.id, standIn }, {
    overCount: () => refuse(409, 'over-count', `${pick.item.designators} was packed meanwhile: ${qty} more would be too many`, { itemId: pick.item.itemId }),
    binShort: (left: number) => refuse(409, 'bin-short', `Bin ${code} has only ${Math.max(0, left)} × ${pick.partName} left on the books (counting parts already in unsealed bags): count the bin or use another`, { raced: true }),
  })
  const item = {
    itemId: pick.item.itemId, qtyPacked: done.qtyPacked,
    standInPartId: standIn ? pick.partId : pick.item.standInPartId,
    standInName: standIn ? pick.partName : pick.item.standInName,
    standInWarning: standIn ? standIn.warning : pick.item.standInWarning,
  }
  const totals = bagTotals(items.map(i => (i.itemId === item.itemId ? { ...i, qtyPacked: item.qtyPacked } : i)))
  const lastPack = { id: done.eventId, qty, itemId: item.itemId, binCode: code, partName: pick.partName }
  return packed(db, h.id, packer, { itemId: pick.item.itemId, designators: pick.item.designators, qty, binCode: code, partName: pick.partName, standIn: pick.standIn }, { item, totals, lastPack })
}

/**
 * Sends one multi-statement batch (fixed SQL text, `?` parameters) on the batch pool and returns each
 * statement's result, running it again when MariaDB picks it as a deadlock victim. When a statement
 * fails, the rest of the batch (its commit included) does not run and its transaction stays open on
 * the connection: it is rolled back before the connection goes back to the pool, or the connection is
 * dropped when even that fails.
 */
async function runBatch(text: string, params: unknown[]): Promise<unknown[]> {
  // A batch is a whole transaction, so a deadlock victim (rolled back by MariaDB) can simply run again.
  return retryOnLockConflict(() => runBatchOnce(text, params), { message: 'The packing station is busy with the same bins: scan again' })
}

async function runBatchOnce(text: string, params: unknown[]): Promise<unknown[]> {
  const conn = await useBatchPool().getConnection()
  let destroyed = false
  try {
    const [results] = await conn.query(text, params)
    return results as unknown as unknown[]
  }
  catch (err) {
    try {
      await conn.query('rollback')
    }
    catch {
      conn.destroy()
      destroyed = true
    }
    throw err
  }
  finally {
    if (!destroyed) conn.release()
  }
}

interface PackWrite { bagId: number, itemId: number, lotId: number, binId: number, partId: number, qty: number, userId: number, standIn: { warning: string | null } | null }

/**
 * One pack as one transaction in one round trip: the statements go to MariaDB together and end with
 * the commit, so no row lock waits on this process between statements (every packer of a kit wants
 * the same lots, and a seal wants all of them). In order: claim (or renew the claim on) the bag, whose
 * row lock serialises every write to it; lock the lot and count what unsealed bags hold of it (read
 * committed and a new statement after the lock, so a pack another packer committed meanwhile is
 * counted); then add to the line only if the claim held, the lot has the parts free and the line
 * needs them, and record the scan only if the line was added to. Session variables carry each
 * outcome to the next statement and back to us; they are reset first, since connections are reused.
 */
async function packInOneTrip(db: Db, w: PackWrite, refusals: { overCount: () => Error, binShort: (left: number) => Error }) {
  const results = await runBatch(`set @kw_claimed = 0, @kw_on_hand = null, @kw_held = 0, @kw_added = 0, @kw_event = null;
set transaction isolation level read committed;
start transaction;
${CLAIM_SQL};
set @kw_claimed = row_count();
select on_hand into @kw_on_hand from lots where id = ? for update;
${heldOfLot('?')} into @kw_held;
update bag_items set qty_packed = qty_packed + ?${w.standIn ? ', stand_in_part_id = ?, stand_in_warning = ?' : ''}
  where id = ? and bag_id = ? and qty_packed + ? <= qty_needed and @kw_claimed = 1 and @kw_on_hand - @kw_held >= ?;
set @kw_added = row_count();
insert into bag_events (bag_id, bag_item_id, kind, lot_id, bin_id, part_id, qty, user_id, note)
  select ?, ?, 'pack', ?, ?, ?, ?, ?, ? from dual where @kw_added = 1;
set @kw_event = if(@kw_added = 1, last_insert_id(), null);
commit;
select @kw_claimed as claimed, @kw_added as added, @kw_on_hand as onHand, @kw_held as held, @kw_event as eventId,
  (select qty_packed from bag_items where id = ?) as qtyPacked;`, [
    w.userId, w.bagId, w.userId,
    w.lotId, w.lotId,
    w.qty, ...(w.standIn ? [w.partId, w.standIn.warning] : []), w.itemId, w.bagId, w.qty, w.qty,
    w.bagId, w.itemId, w.lotId, w.binId, w.partId, w.qty, w.userId, w.standIn ? 'stand-in' : null,
    w.itemId,
  ])
  const out = (results.at(-1) as { claimed: number | string, added: number | string, onHand: number | string | null, held: number | string, eventId: number | string | null, qtyPacked: number | string | null }[])[0]!
  if (Number(out.added) === 1) return { eventId: Number(out.eventId), qtyPacked: Number(out.qtyPacked) }
  // Nothing was written (or only the claim renewed): say why.
  if (Number(out.claimed) !== 1) throw await claimRefusal(db, w.bagId)
  const free = out.onHand == null ? 0 : Number(out.onHand) - Number(out.held)
  if (free < w.qty) throw refusals.binShort(free)
  throw refusals.overCount()
}

function countsSingly(item: BagItemRow) {
  return COUNTED_SINGLY.includes(item.kind)
}

/**
 * After a pack: what changed (the line, the totals, the scan undo would take back) for the station to
 * patch its view; when that was the last line, the bag is sealed at once and the whole bag comes back.
 */
async function packed(db: Db, bagId: number, packer: Packer, what: Record<string, unknown>, change: { item: Record<string, unknown> & { itemId: number }, totals: ReturnType<typeof bagTotals>, lastPack: Record<string, unknown> }) {
  const base = { outcome: 'packed' as const, packed: what, ...change, sealed: false, sealError: null as string | null, bag: null as BagView | null }
  if (change.totals.lines === 0 || change.totals.packed < change.totals.needed) return base
  try {
    await sealBag(db, bagId, packer)
    base.sealed = true
  }
  catch (err) {
    base.sealError = (err as Error).message
  }
  base.bag = await bagView(db, bagId)
  return base
}

/** The parts' rows (for stand-in rules and names), for the few scans that need more than the bag's own lines. */
async function partsById(db: Db, ids: number[]) {
  const rows = ids.length ? await db.select().from(schema.parts).where(inArray(schema.parts.id, ids)) : []
  return new Map(rows.map(p => [p.id, p]))
}

/** Open lines this bin's parts serve: own part first, then allowed stand-ins, in pouch order. */
async function binCandidates(db: Db, items: BagItemRow[], binPartIds: number[], itemId?: number): Promise<Candidate[]> {
  const open = items.filter(i => i.qtyPacked < i.qtyNeeded && (itemId === undefined || i.itemId === itemId))
  const partIds = [...new Set(binPartIds)]
  if (!open.length || !partIds.length) return []
  const own: Candidate[] = []
  for (const p of partIds) {
    for (const item of open) if (item.partId === p) own.push({ item, partId: p, partName: item.partName, standIn: null })
  }
  // The usual scan: the bin holds a line's own part, and own parts always come before stand-ins.
  if (own.length) return own
  const mayStandIn = open.filter(i => !i.noStandIns)
  if (!mayStandIn.length) return []
  const [rules, partById] = await Promise.all([loadSwapRules(db), partsById(db, [...new Set([...partIds, ...mayStandIn.map(i => i.partId)])])])
  const standIns: Candidate[] = []
  for (const p of partIds) {
    if (!partById.has(p)) continue
    for (const item of mayStandIn) {
      if (!partById.has(item.partId)) continue
      const v = standInVerdict(rules, bagSwapPart(partById.get(item.partId)!), bagSwapPart(partById.get(p)!), false)
      if (v) standIns.push({ item, partId: p, partName: partById.get(p)!.name, standIn: { warning: v.warning } })
    }
  }
  return standIns
}

/** Why a bin does not serve this bag, in the packer's words. */
async function wrongBin(db: Db, code: string, items: BagItemRow[], binPartIds: number[], itemId?: number) {
  if (!binPartIds.length) return refuse(409, 'wrong-bin', `Bin ${code} holds nothing on the books: this bag needs nothing from it`)
  const done = items.find(i => binPartIds.includes(i.partId) && i.qtyPacked >= i.qtyNeeded && (itemId === undefined || i.itemId === itemId))
  if (done) return refuse(409, 'line-done', `${done.designators} already has its ${done.qtyNeeded} × ${done.partName}: nothing more from bin ${code}`)
  const partById = await partsById(db, [...new Set(binPartIds)])
  const what = [...new Set(binPartIds.map(id => partById.get(id)?.name ?? `part ${id}`))].join(', ')
  if (itemId !== undefined) return refuse(409, 'wrong-bin', `Bin ${code} holds ${what}, which does not go on that line`)
  return refuse(409, 'wrong-bin', `Wrong bin: ${code} holds ${what}, and nothing still open in this bag takes it`)
}

/** The oldest lot of the part in this bin that still has `qty` free after what unsealed bags hold. */
function chooseLot(lots: BinLot[], qty: number, binCode: string, partName: string) {
  let best = 0
  for (const lot of lots) {
    const free = lot.onHand - lot.pending
    if (free >= qty) return lot
    best = Math.max(best, free)
  }
  throw refuse(409, 'bin-short', `Bin ${binCode} has only ${Math.max(0, best)} × ${partName} left on the books (counting parts already in unsealed bags): count the bin or use another`)
}

/** Takes back the bag's last pack that is not yet undone. */
export async function undoLast(db: Db, bagId: number, packer: Packer) {
  const E = schema.bagEvents
  const I = schema.bagItems
  await db.transaction(async (tx) => {
    await claim(tx, bagId, packer.id)
    const [ev] = await tx.select().from(E).where(and(eq(E.bagId, bagId), eq(E.kind, 'pack'), eq(E.undone, 0))).orderBy(desc(E.id)).limit(1).for('update')
    if (!ev || !ev.bagItemId || !ev.qty) throw refuse(409, 'nothing-to-undo', 'Nothing to undo: no scan in this bag is left to take back')
    const [a] = await tx.update(I).set({ qtyPacked: sql`${I.qtyPacked} - ${ev.qty}` }).where(and(eq(I.id, ev.bagItemId), sql`${I.qtyPacked} >= ${ev.qty}`))
    const [b] = await tx.update(E).set({ undone: 1 }).where(and(eq(E.id, ev.id), eq(E.undone, 0)))
    if (a.affectedRows !== 1 || b.affectedRows !== 1) throw refuse(409, 'nothing-to-undo', 'That scan was already taken back')
    const [still] = await tx.select({ n: sql<number>`count(*)` }).from(E)
      .where(and(eq(E.bagItemId, ev.bagItemId), eq(E.kind, 'pack'), eq(E.undone, 0), eq(E.partId, ev.partId!)))
    if (!Number(still?.n)) await tx.update(I).set({ standInPartId: null, standInWarning: null }).where(and(eq(I.id, ev.bagItemId), eq(I.standInPartId, ev.partId!)))
    await tx.insert(E).values({ bagId, bagItemId: ev.bagItemId, kind: 'undo', lotId: ev.lotId, binId: ev.binId, partId: ev.partId, qty: ev.qty, userId: packer.id, note: `took back scan #${ev.id}` })
  })
  return bagView(db, bagId)
}

/** SQL: a bag's picks per lot, from its pack events not undone. Parameter: bag id. */
const PICKS = `(select lot_id, cast(sum(qty) as signed) as q from bag_events
    where bag_id = ? and kind = 'pack' and undone = 0 and lot_id is not null group by lot_id having sum(qty) > 0)`

/**
 * Seals a fully packed bag in one transaction: the picks leave their lots (ledger 'pick', never below
 * zero), the order's reservations are consumed, the bag is sealed and the seal recorded. Like a pack,
 * it goes to MariaDB as one round trip ending in its commit, so the bag's and the lots' row locks are
 * held only while MariaDB runs it: first the checks, each under the lock of what it checks (the bag's
 * claim, every line packed, every lot still holding its picks), then the writes, each only if all
 * checks passed (runBatch retries it when it loses a deadlock to another seal over shared lots).
 */
export async function sealBag(db: Db, bagId: number, packer: Packer) {
  const results = await runBatch(`set @kw_mine = 0, @kw_open = -1, @kw_lots = 0, @kw_ok = -1, @kw_go = 0;
set transaction isolation level read committed;
start transaction;
select count(*) into @kw_mine from bags where ${CLAIMABLE} for update;
select count(*) into @kw_open from bag_items where bag_id = ? and qty_packed < qty_needed;
select count(*) into @kw_lots from ${PICKS} p;
select count(*) into @kw_ok from lots l where l.id in (select lot_id from ${PICKS} p)
  and l.on_hand >= (select p.q from ${PICKS} p where p.lot_id = l.id) order by l.id for update;
set @kw_go = (@kw_mine = 1 and @kw_open = 0 and @kw_ok = @kw_lots);
update bags set state = 'sealed', sealed_by = ?, sealed_at = now(), claimed_by = null, claimed_at = null where id = ? and @kw_go;
update lots l join ${PICKS} p on p.lot_id = l.id set l.on_hand = l.on_hand - p.q where @kw_go;
insert into ledger (lot_id, part_id, bin_id, kind, qty, user_id, reason, order_id, bag_id)
  select l.id, l.part_id, l.bin_id, 'pick', -p.q, ?, concat('Packed into bag ', g.code), g.order_id, g.id
  from ${PICKS} p join lots l on l.id = p.lot_id join bags g on g.id = ? where @kw_go order by l.id;
update reservations set state = 'consumed' where order_id = (select order_id from bags where id = ?) and state = 'confirmed' and @kw_go;
insert into bag_events (bag_id, kind, user_id) select ?, 'seal', ? from dual where @kw_go;
commit;
select @kw_mine as mine, @kw_open as open, @kw_lots as lots, @kw_ok as ok, @kw_go as go;`, [
    bagId, packer.id,
    bagId,
    bagId,
    bagId, bagId,
    packer.id, bagId,
    bagId,
    packer.id, bagId, bagId,
    bagId,
    bagId, packer.id,
  ])
  const out = (results.at(-1) as { mine: number | string, open: number | string, lots: number | string, ok: number | string, go: number | string }[])[0]!
  if (Number(out.go) === 1) return
  // Nothing was written: say why, as the station and the bag page show it.
  if (Number(out.mine) !== 1) throw await claimRefusal(db, bagId)
  const open = Number(out.open)
  if (open > 0) throw refuse(409, 'incomplete', `${open} line${open === 1 ? ' is' : 's are'} not fully packed yet: the bag cannot be sealed`)
  const [[short]] = await db.execute(sql.raw(format(`select l.id as lotId, l.on_hand as onHand, b.code as binCode, p.q as asked
    from lots l join bins b on b.id = l.bin_id join ${PICKS} p on p.lot_id = l.id where l.on_hand < p.q order by l.id limit 1`, [bagId]))) as unknown as [{ lotId: number, onHand: number, binCode: string, asked: number }[]]
  if (!short) throw createError({ statusCode: 409, statusMessage: 'Not enough stock', message: 'The stock changed while sealing: try again' })
  throw notEnoughStock({ binCode: short.binCode, lotId: Number(short.lotId), onHand: Number(short.onHand), asked: Number(short.asked) })
}

/** An organiser unseals a bag with a reason: its picks go back to their lots (ledger 'return') and the reservations hold again. */
export async function unsealBag(db: Db, bagId: number, organiser: Packer, reason: string) {
  const B = schema.bags
  const L = schema.ledger
  await db.transaction(async (tx) => {
    const [res] = await tx.update(B).set({ state: 'packing', sealedBy: null, sealedAt: null, claimedBy: null, claimedAt: null })
      .where(and(eq(B.id, bagId), eq(B.state, 'sealed')))
    const [bag] = await tx.select().from(B).where(eq(B.id, bagId))
    if (!bag) throw refuse(404, 'unknown', 'There is no such bag')
    if (res.affectedRows !== 1) throw refuse(409, 'not-sealed', `Bag ${bag.code} is ${bag.state === 'collected' ? 'already collected' : 'not sealed'}: there is nothing to unseal`)
    const net = await tx.select({ lotId: L.lotId, qty: sql<number>`cast(sum(${L.qty}) as signed)` }).from(L)
      .where(and(eq(L.bagId, bagId), inArray(L.kind, ['pick', 'return']))).groupBy(L.lotId).orderBy(asc(L.lotId))
    await moveStockBatch(tx, net.filter(n => Number(n.qty) < 0)
      .map(n => ({ lotId: n.lotId, qty: -Number(n.qty), kind: 'return' as const, userId: organiser.id, orderId: bag.orderId, bagId, reason: `Bag ${bag.code} unsealed: ${reason}`.slice(0, 255) })))
    await tx.execute(sql`update reservations r join orders o on o.id = r.order_id set r.state = 'confirmed'
      where r.order_id = ${bag.orderId} and r.state = 'consumed' and o.state = 'paid'`)
    await tx.insert(schema.bagEvents).values({ bagId, kind: 'unseal', userId: organiser.id, note: reason.slice(0, 255) })
    await tx.insert(schema.auditLog).values({ userId: organiser.id, action: 'bag.unseal', subjectType: 'bag', subjectId: String(bagId), detail: { code: bag.code, reason } })
  })
  return bagView(db, bagId)
}

/** A bag's history: every claim, scan, refusal, undo, seal and unseal with who and when. */
export async function bagHistory(db: Db, bagId: number) {
  const E = schema.bagEvents
  return db.select({
    id: E.id, kind: E.kind, qty: E.qty, undone: E.undone, note: E.note, at: E.createdAt,
    who: schema.users.name, binCode: schema.bins.code, partName: schema.parts.name, designators: schema.bomLines.designators,
  }).from(E)
    .leftJoin(schema.users, eq(schema.users.id, E.userId))
    .leftJoin(schema.bins, eq(schema.bins.id, E.binId))
    .leftJoin(schema.parts, eq(schema.parts.id, E.partId))
    .leftJoin(schema.bagItems, eq(schema.bagItems.id, E.bagItemId))
    .leftJoin(schema.bomLines, eq(schema.bomLines.id, schema.bagItems.lineId))
    .where(eq(E.bagId, bagId)).orderBy(desc(E.id)).limit(500)
}

/** Bags of a build day with their packing totals (the bags page and the progress board). */
export async function bagsOfDay(db: Db, buildDayId: number) {
  const headers = await loadBagHeaders(db, { buildDayId }, CLAIM_LAPSE_SECONDS)
  const I = schema.bagItems
  const sums = headers.length
    ? await db.select({ bagId: I.bagId, needed: sql<number>`cast(sum(${I.qtyNeeded}) as signed)`, packed: sql<number>`cast(sum(${I.qtyPacked}) as signed)`, lines: sql<number>`count(*)` })
      .from(I).where(inArray(I.bagId, headers.map(h => h.id))).groupBy(I.bagId)
    : []
  const byBag = new Map(sums.map(s => [s.bagId, s]))
  return headers.map(h => ({ ...h, needed: Number(byBag.get(h.id)?.needed ?? 0), packed: Number(byBag.get(h.id)?.packed ?? 0), lines: Number(byBag.get(h.id)?.lines ?? 0) }))
}

export interface ProgressDay {
  id: number
  name: string
  date: string
  notStarted: number
  inProgress: number
  sealed: number
  collected: number
  total: number
  paidWithoutBag: number
  packing: { code: string, seat: number | null, builderName: string, kitName: string, packer: string | null, packed: number, needed: number }[]
}

/** Per build day: bags not started, in progress and sealed, with the bags being packed now. */
export async function packingProgress(db: Db) {
  const days = await db.select({ id: schema.buildDays.id, name: schema.buildDays.name, date: schema.buildDays.date }).from(schema.buildDays).orderBy(asc(schema.buildDays.date), asc(schema.buildDays.id))
  const counts = await db.select({ buildDayId: schema.bags.buildDayId, state: schema.bags.state, n: sql<number>`count(*)` }).from(schema.bags).groupBy(schema.bags.buildDayId, schema.bags.state)
  const paid = await db.select({ buildDayId: schema.orders.buildDayId, n: sql<number>`count(*)` }).from(schema.orders)
    .leftJoin(schema.bags, eq(schema.bags.orderId, schema.orders.id))
    .where(and(eq(schema.orders.state, 'paid'), isNull(schema.bags.id))).groupBy(schema.orders.buildDayId)
  const out: ProgressDay[] = []
  for (const d of days) {
    const of = (s: string) => Number(counts.find(c => c.buildDayId === d.id && c.state === s)?.n ?? 0)
    const total = counts.filter(c => c.buildDayId === d.id).reduce((n, c) => n + Number(c.n), 0)
    const busy = of('packing') ? (await bagsOfDay(db, d.id)).filter(b => b.state === 'packing') : []
    out.push({
      ...d,
      notStarted: of('open'), inProgress: of('packing'), sealed: of('sealed') + of('collected'), collected: of('collected'), total,
      paidWithoutBag: Number(paid.find(p => p.buildDayId === d.id)?.n ?? 0),
      packing: busy.map(b => ({ code: b.code, seat: b.seat, builderName: b.builderName, kitName: b.kitName, packer: b.claim?.name ?? null, packed: b.packed, needed: b.needed })),
    })
  }
  return { days: out, at: new Date().toISOString() }
}

// ---- label sheets chosen in the browser ----

const mm = (max: number) => z.coerce.number().min(0, 'must be 0 mm or more').max(max, `must be at most ${max} mm`)

export const labelLayoutQuery = z.object({
  layout: z.string().max(40).default('a4-3x8'),
  page: z.enum(['A4', 'Letter', 'custom']).optional(),
  pageWidth: mm(1000).optional(),
  pageHeight: mm(2000).optional(),
  rows: z.coerce.number().int('must be a whole number').min(1).max(40).optional(),
  cols: z.coerce.number().int('must be a whole number').min(1).max(20).optional(),
  marginTop: mm(200).optional(),
  marginLeft: mm(200).optional(),
  gapX: mm(100).optional(),
  gapY: mm(100).optional(),
  labelWidth: mm(500).optional(),
  labelHeight: mm(500).optional(),
  startAt: z.coerce.number().int().min(0).max(799).default(0),
})

/** The sheet layout a query asks for: a stock layout by id, or 'custom' built from the query's sizes. */
export function layoutFromQuery(q: z.output<typeof labelLayoutQuery>): SheetLayout {
  if (q.layout !== 'custom') {
    const found = SHEET_LAYOUTS.find(l => l.id === q.layout)
    if (!found) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `Unknown label layout "${q.layout}": choose one from the list or "custom"`, data: { fields: { layout: 'unknown layout' } } })
    return found
  }
  const page = q.page === 'custom' || !q.page
    ? { widthMm: q.pageWidth ?? 0, heightMm: q.pageHeight ?? 0 }
    : q.page
  const layout: SheetLayout = {
    id: 'custom', name: 'Custom', page, rows: q.rows ?? 1, cols: q.cols ?? 1,
    marginTopMm: q.marginTop ?? 0, marginLeftMm: q.marginLeft ?? 0, gapXMm: q.gapX ?? 0, gapYMm: q.gapY ?? 0,
    ...(q.labelWidth ? { labelWidthMm: q.labelWidth } : {}), ...(q.labelHeight ? { labelHeightMm: q.labelHeight } : {}),
  }
  const problems = validateLayout(layout)
  if (problems.length) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `This label layout cannot be printed: ${problems.join('; ')}` })
  return layout
}

/** Sends a PDF for the browser's own viewer (an iframe on our pages) or as a download. */
export function sendPdf(event: H3Event, pdf: Buffer, filename: string, download: boolean) {
  setResponseHeaders(event, {
    'Content-Type': 'application/pdf',
    'Content-Disposition': `${download ? 'attachment' : 'inline'}; filename="${filename}"`,
    'Content-Security-Policy': "default-src 'none'; object-src 'self'; frame-ancestors 'self'",
  })
  return pdf
}

export const BagCodeParams = z.object({
  code: z.string().transform(s => s.trim().toUpperCase()).refine(isBagCode, 'This is not a bag code (B and 5 characters, e.g. B7K3QX)'),
})

/** The id of the bag with this code; 404 when there is none. */
export async function bagIdByCode(db: Db, code: string) {
  const [bag] = await db.select({ id: schema.bags.id }).from(schema.bags).where(eq(schema.bags.code, code))
  if (!bag) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no bag ${code}` })
  return bag.id
}

/** A small page for a label link that does not verify (opened from a phone's own camera app). */
export function labelRefused(event: H3Event, reason: string) {
  setResponseStatus(event, 400)
  setResponseHeader(event, 'Content-Type', 'text/html; charset=utf-8')
  const text = reason.replace(/[&<>"]/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' })[c]!)
  return `<!doctype html><html lang="en"><meta name="viewport" content="width=device-width, initial-scale=1"><title>Label refused · Kitwright</title>
<body style="font-family: system-ui, sans-serif; padding: 1.5rem; background: #f7f5f0; color: #0f1e28"><h1 style="color: #921f18">This label was refused</h1>
<p>${text[0]!.toUpperCase()}${text.slice(1)}.</p><p>Scan it again, or type the code printed under the QR code at the <a href="/pack">packing station</a>.</p></body></html>`
}

/** The build day to show first: the one with most bags still to pack, else the first. */
export function defaultDay<D extends Pick<ProgressDay, 'notStarted' | 'inProgress'>>(days: D[]): D | undefined {
  return [...days].sort((a, b) => (b.notStarted + b.inProgress) - (a.notStarted + a.inProgress))[0]
}
