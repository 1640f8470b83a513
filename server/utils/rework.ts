// Rework after a revision: when a kit's newer revision is released while bags of an older one are
// sealed, each such bag gets a list of what to add and take out — from the revision diff and the
// bag's own record (the stand-ins actually packed) — and the organiser reworks it or keeps it.
import type { MySql2Database } from 'drizzle-orm/mysql2'
import type * as schema from '../db/schema'
import type { ReworkStep } from '../db/schema/builders'
import type { Db, Tx } from './db'
import { availableByPart, moveStock } from './stock'
import { loadEffectiveBom } from './revision-bom'
import { compressDesignators, expandDesignators } from '../../shared/utils/designators'
import { diffRevisions, type BomLine } from '../../shared/utils/bom'

type Reader = Db | Tx
type BagItemRow = typeof schema.bagItems.$inferSelect

export interface ReworkMove { designators: string, from: string, to: string }
/** How one bag item changes: removed, re-pointed to the new revision's line, or a new item. */
type ItemChange =
  | { kind: 'delete', itemId: number }
  | { kind: 'update', itemId: number, lineId: number, stageId: number | null, partId: number, standInPartId: number | null, standInWarning: string | null, qty: number }
  | { kind: 'insert', lineId: number, stageId: number | null, partId: number, qty: number }

export interface ReworkPlan {
  bagId: number
  fromRevisionId: number
  toRevisionId: number
  add: ReworkStep[]
  remove: ReworkStep[]
  move: ReworkMove[]
  problems: string[]
  items: ItemChange[]
}

/** A line's designators written one way, so equal lists compare equal. */
function sameDesignators(text: string) {
  try {
    return compressDesignators(expandDesignators(text))
  }
  catch {
    return text.trim()
  }
}

/** The newest released revision of each kit. */
async function newestReleased(db: Reader) {
  const revs = await db.select({ id: tables.revisions.id, kitId: tables.revisions.kitId, label: tables.revisions.label, releasedAt: tables.revisions.releasedAt })
    .from(tables.revisions).where(eq(tables.revisions.state, 'released'))
  const newest = new Map<number, (typeof revs)[number]>()
  for (const r of revs) {
    const had = newest.get(r.kitId)
    if (!had || (r.releasedAt?.getTime() ?? 0) > (had.releasedAt?.getTime() ?? 0) || ((r.releasedAt?.getTime() ?? 0) === (had.releasedAt?.getTime() ?? 0) && r.id > had.id)) newest.set(r.kitId, r)
  }
  return newest
}

/** The old side of the diff: the bag's own items, as BOM lines of the bag's revision (option ids as names). */
async function bagSide(db: Reader, bagId: number) {
  const rows = await db.select({
    item: tables.bagItems, designators: tables.bomLines.designators, notes: tables.bomLines.notes, noStandIns: tables.bomLines.noStandIns,
    optionName: tables.options.name, stage: tables.stages.name, stageOrder: tables.stages.sortOrder,
  }).from(tables.bagItems)
    .innerJoin(tables.bomLines, eq(tables.bomLines.id, tables.bagItems.lineId))
    .leftJoin(tables.options, eq(tables.options.id, tables.bomLines.optionId))
    .leftJoin(tables.stages, eq(tables.stages.id, tables.bagItems.stageId))
    .where(eq(tables.bagItems.bagId, bagId))
  const lines: BomLine[] = rows.map(r => ({
    id: String(r.item.lineId), designators: r.designators, qty: r.item.qtyNeeded, partId: String(r.item.partId),
    stage: r.stage ?? '', stageOrder: r.stageOrder ?? undefined, noStandIns: r.noStandIns, notes: r.notes, optionId: r.optionName,
  }))
  return { lines, itemOf: new Map(rows.map(r => [r.item.lineId, r.item])) }
}

/** The order's options mapped onto the target revision by group and option name. */
async function targetOptions(db: Reader, orderOptionIds: number[], toRevisionId: number) {
  const problems: string[] = []
  if (!orderOptionIds.length) return { ids: [] as number[], problems }
  const chosen = await db.select({ name: tables.options.name, group: tables.optionGroups.name }).from(tables.options)
    .innerJoin(tables.optionGroups, eq(tables.optionGroups.id, tables.options.groupId)).where(inArray(tables.options.id, orderOptionIds))
  const there = await db.select({ id: tables.options.id, name: tables.options.name, group: tables.optionGroups.name }).from(tables.options)
    .innerJoin(tables.optionGroups, eq(tables.optionGroups.id, tables.options.groupId)).where(eq(tables.options.revisionId, toRevisionId))
  const ids: number[] = []
  for (const c of chosen) {
    const match = there.find(t => t.name === c.name && t.group === c.group)
    if (match) ids.push(match.id)
    else problems.push(`The option "${c.name}" is not in the new revision: rework this bag by hand`)
  }
  return { ids, problems }
}

/** What to add to and take out of one sealed bag to bring it to `toRevisionId`. */
export async function planBagRework(db: Reader, bag: { id: number, revisionId: number, orderOptionIds: number[] }, toRevisionId: number): Promise<ReworkPlan> {
  const plan: ReworkPlan = { bagId: bag.id, fromRevisionId: bag.revisionId, toRevisionId, add: [], remove: [], move: [], problems: [], items: [] }
  const options = await targetOptions(db, bag.orderOptionIds, toRevisionId)
  plan.problems.push(...options.problems)
  if (plan.problems.length) return plan
  let target: Awaited<ReturnType<typeof loadEffectiveBom>>
  try {
    target = await loadEffectiveBom(db as unknown as MySql2Database<typeof schema>, toRevisionId, options.ids)
  }
  catch (err) {
    plan.problems.push(`The new revision cannot be worked out for this bag's options: ${(err as Error).message}`)
    return plan
  }
  const optionName = new Map(target.groups.flatMap(g => g.options.map(o => [o.id, o.name])))
  const newLines = target.effective.map(l => ({ ...l, optionId: l.optionId ? optionName.get(l.optionId) ?? l.optionId : null }))
  const stageIdOf = new Map(target.rows.map(r => [r.id, r.stageId]))
  const old = await bagSide(db, bag.id)
  const diff = diffRevisions(old.lines, newLines)

  const held = (item: BagItemRow) => ({ partId: item.standInPartId ?? item.partId, qty: item.qtyPacked })
  for (const l of diff.removed) {
    const item = old.itemOf.get(Number(l.id))!
    const h = held(item)
    if (h.qty > 0) plan.remove.push({ lineId: item.lineId, designators: l.designators, partId: h.partId, qty: h.qty, why: 'line left out of the new revision' })
    plan.items.push({ kind: 'delete', itemId: item.id })
  }
  for (const l of diff.added) {
    if (l.partId == null) {
      plan.problems.push(`New line ${l.designators} has no catalogue part yet`)
      continue
    }
    plan.add.push({ lineId: Number(l.id), designators: l.designators, partId: Number(l.partId), qty: l.qty, why: 'new line' })
    plan.items.push({ kind: 'insert', lineId: Number(l.id), stageId: stageIdOf.get(Number(l.id)) ?? null, partId: Number(l.partId), qty: l.qty })
  }
  for (const c of diff.changed) changedLine(plan, old.itemOf.get(Number(c.before.id))!, c.before, c.after, c.fields, stageIdOf)
  repointUnchanged(plan, old, newLines, diff, stageIdOf)
  return plan
}

function changedLine(plan: ReworkPlan, item: BagItemRow, before: BomLine, after: BomLine, fields: string[], stageIdOf: Map<number, number | null>) {
  if (after.partId == null) {
    plan.problems.push(`Line ${after.designators} has no catalogue part yet in the new revision`)
    return
  }
  const newPart = Number(after.partId)
  const heldPart = item.standInPartId ?? item.partId
  const keepStandIn = heldPart !== newPart && !fields.includes('part') && !after.noStandIns
  const holding = keepStandIn ? heldPart : newPart
  if (holding !== heldPart) {
    if (item.qtyPacked > 0) plan.remove.push({ lineId: item.lineId, designators: before.designators, partId: heldPart, qty: item.qtyPacked, why: 'part changed' })
    plan.add.push({ lineId: Number(after.id), designators: after.designators, partId: newPart, qty: after.qty, why: 'part changed' })
  }
  else if (after.qty > item.qtyPacked) {
    plan.add.push({ lineId: Number(after.id), designators: after.designators, partId: holding, qty: after.qty - item.qtyPacked, why: `quantity ${item.qtyPacked} → ${after.qty}` })
  }
  else if (after.qty < item.qtyPacked) {
    plan.remove.push({ lineId: item.lineId, designators: before.designators, partId: holding, qty: item.qtyPacked - after.qty, why: `quantity ${item.qtyPacked} → ${after.qty}` })
  }
  if (fields.includes('stage')) plan.move.push({ designators: after.designators, from: before.stage || 'no stage', to: after.stage || 'no stage' })
  plan.items.push({
    kind: 'update', itemId: item.id, lineId: Number(after.id), stageId: stageIdOf.get(Number(after.id)) ?? null, partId: newPart,
    standInPartId: keepStandIn ? item.standInPartId : null, standInWarning: keepStandIn ? item.standInWarning : null, qty: after.qty,
  })
}

/** Lines the diff counts as unchanged still belong to the old revision: point their items at the new lines. */
function repointUnchanged(plan: ReworkPlan, old: Awaited<ReturnType<typeof bagSide>>, newLines: BomLine[], diff: ReturnType<typeof diffRevisions>, stageIdOf: Map<number, number | null>) {
  const usedOld = new Set([...diff.removed.map(l => l.id), ...diff.changed.map(c => c.before.id)])
  const usedNew = new Set([...diff.added.map(l => l.id), ...diff.changed.map(c => c.after.id)])
  const key = (l: BomLine) => JSON.stringify([l.optionId ?? '', sameDesignators(l.designators), l.partId, l.stage, l.qty])
  const waiting = new Map<string, BomLine[]>()
  for (const l of newLines.filter(l => !usedNew.has(l.id))) waiting.set(key(l), [...(waiting.get(key(l)) ?? []), l])
  for (const l of old.lines.filter(l => !usedOld.has(l.id))) {
    const match = waiting.get(key(l))?.shift()
    const item = old.itemOf.get(Number(l.id))!
    if (!match) {
      plan.problems.push(`Line ${l.designators} could not be matched in the new revision`)
      continue
    }
    if (match.id === l.id) continue
    plan.items.push({ kind: 'update', itemId: item.id, lineId: Number(match.id), stageId: stageIdOf.get(Number(match.id)) ?? null, partId: item.partId, standInPartId: item.standInPartId, standInWarning: item.standInWarning, qty: item.qtyNeeded })
  }
}

type NamedStep = ReworkStep & { partName: string }
export interface ReworkBagView {
  bagId: number, code: string, seat: number | null, builder: string, fromLabel: string, sealedAt: Date | null
  add: NamedStep[], remove: NamedStep[], move: ReworkMove[], problems: string[]
}

/**
 * Sealed bags whose kit has a newer released revision and no decision for it yet, grouped by kit,
 * each with its plan; and the decisions taken so far.
 */
export async function listReworkCandidates(db: Db) {
  const newest = await newestReleased(db)
  const sealed = await db.select({
    bag: { id: tables.bags.id, code: tables.bags.code, revisionId: tables.bags.revisionId, sealedAt: tables.bags.sealedAt },
    kitId: tables.revisions.kitId, kitName: tables.kits.name, fromLabel: tables.revisions.label, fromReleasedAt: tables.revisions.releasedAt,
    optionIds: tables.orders.optionIds, seat: tables.orders.seat, builder: tables.users.name,
  }).from(tables.bags)
    .innerJoin(tables.revisions, eq(tables.revisions.id, tables.bags.revisionId))
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
    .innerJoin(tables.orders, eq(tables.orders.id, tables.bags.orderId))
    .innerJoin(tables.users, eq(tables.users.id, tables.orders.userId))
    .where(eq(tables.bags.state, 'sealed'))
    .orderBy(asc(tables.orders.seat), asc(tables.bags.id))
  const decided = sealed.length
    ? await db.select({ bagId: tables.bagReworks.bagId, toRevisionId: tables.bagReworks.toRevisionId }).from(tables.bagReworks).where(inArray(tables.bagReworks.bagId, sealed.map(s => s.bag.id)))
    : []
  const kits = new Map<string, { kitId: number, kitName: string, to: { id: number, label: string, releasedAt: Date | null }, bags: ReworkBagView[] }>()
  const parts = new Map<number, string>()
  const out: { key: string, bag: (typeof sealed)[number], plan: ReworkPlan }[] = []
  for (const s of sealed) {
    const to = newest.get(s.kitId)
    if (!to || to.id === s.bag.revisionId) continue
    if ((to.releasedAt?.getTime() ?? 0) < (s.fromReleasedAt?.getTime() ?? 0)) continue
    if (decided.some(d => d.bagId === s.bag.id && d.toRevisionId === to.id)) continue
    const plan = await planBagRework(db, { id: s.bag.id, revisionId: s.bag.revisionId, orderOptionIds: s.optionIds ?? [] }, to.id)
    const key = `${s.kitId}:${to.id}`
    if (!kits.has(key)) kits.set(key, { kitId: s.kitId, kitName: s.kitName, to: { id: to.id, label: to.label, releasedAt: to.releasedAt }, bags: [] })
    out.push({ key, bag: s, plan })
    for (const step of [...plan.add, ...plan.remove]) parts.set(step.partId, '')
  }
  if (parts.size) {
    for (const p of await db.select({ id: tables.parts.id, name: tables.parts.name }).from(tables.parts).where(inArray(tables.parts.id, [...parts.keys()]))) parts.set(p.id, p.name)
  }
  const named = (steps: ReworkStep[]) => steps.map(s => ({ ...s, partName: parts.get(s.partId) || `Part ${s.partId}` }))
  for (const o of out) {
    kits.get(o.key)!.bags.push({
      bagId: o.bag.bag.id, code: o.bag.bag.code, seat: o.bag.seat, builder: o.bag.builder, fromLabel: o.bag.fromLabel, sealedAt: o.bag.bag.sealedAt,
      add: named(o.plan.add), remove: named(o.plan.remove), move: o.plan.move, problems: o.plan.problems,
    })
  }
  const history = await db.select({ r: tables.bagReworks, code: tables.bags.code, by: tables.users.name }).from(tables.bagReworks)
    .innerJoin(tables.bags, eq(tables.bags.id, tables.bagReworks.bagId)).leftJoin(tables.users, eq(tables.users.id, tables.bagReworks.userId))
    .orderBy(desc(tables.bagReworks.createdAt), desc(tables.bagReworks.id)).limit(50)
  const labels = await revisionLabels(db, history.flatMap(h => [h.r.fromRevisionId, h.r.toRevisionId]))
  return {
    kits: [...kits.values()],
    decided: history.map(h => ({ bagId: h.r.bagId, code: h.code, decision: h.r.decision, from: labels.get(h.r.fromRevisionId), to: labels.get(h.r.toRevisionId), by: h.by, at: h.r.createdAt, added: h.r.added.length, removed: h.r.removed.length })),
  }
}

async function revisionLabels(db: Reader, ids: number[]) {
  const unique = [...new Set(ids)]
  const rows = unique.length ? await db.select({ id: tables.revisions.id, label: tables.revisions.label }).from(tables.revisions).where(inArray(tables.revisions.id, unique)) : []
  return new Map(rows.map(r => [r.id, r.label]))
}

/** Locks the sealed bag and checks that `toRevisionId` is still its pending newer revision. */
async function lockReworkBag(tx: Tx, bagId: number, toRevisionId: number) {
  const [bag] = await tx.select({ id: tables.bags.id, code: tables.bags.code, state: tables.bags.state, revisionId: tables.bags.revisionId, orderId: tables.bags.orderId, optionIds: tables.orders.optionIds, kitId: tables.revisions.kitId })
    .from(tables.bags).innerJoin(tables.orders, eq(tables.orders.id, tables.bags.orderId)).innerJoin(tables.revisions, eq(tables.revisions.id, tables.bags.revisionId))
    .where(eq(tables.bags.id, bagId)).for('update')
  if (!bag) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No bag ${bagId}` })
  if (bag.state !== 'sealed') throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Bag ${bag.code} is ${bag.state}: only sealed bags are reworked` })
  const newest = (await newestReleased(tx)).get(bag.kitId)
  if (!newest || newest.id !== toRevisionId || bag.revisionId === toRevisionId) {
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Bag ${bag.code} has no pending rework to that revision: reload the list` })
  }
  const [done] = await tx.select({ id: tables.bagReworks.id }).from(tables.bagReworks).where(and(eq(tables.bagReworks.bagId, bagId), eq(tables.bagReworks.toRevisionId, toRevisionId)))
  if (done) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `Bag ${bag.code} already has a decision for that revision` })
  return bag
}

/**
 * Reworks a sealed bag to the newer revision in one transaction: parts taken out go back into a lot
 * (the one they were packed from when known), parts added leave the first lot that holds enough
 * (ledger kind 'rework'); the bag's items follow the new revision's lines.
 */
export async function applyBagRework(db: Db, bagId: number, toRevisionId: number, userId: number) {
  return db.transaction(async (tx) => {
    const bag = await lockReworkBag(tx, bagId, toRevisionId)
    const plan = await planBagRework(tx, { id: bag.id, revisionId: bag.revisionId, orderOptionIds: bag.optionIds ?? [] }, toRevisionId)
    if (plan.problems.length) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: plan.problems.join('; ') })
    const label = (await revisionLabels(tx, [toRevisionId])).get(toRevisionId)
    for (const s of plan.remove) {
      const lotId = await returnLot(tx, bag.id, s.partId)
      await moveStock(tx, { lotId, qty: s.qty, kind: 'rework', userId, bagId: bag.id, orderId: bag.orderId, reason: `Rework of bag ${bag.code} to revision ${label}: ${s.designators} taken out` })
    }
    for (const s of plan.add) {
      const lotId = await takeLot(tx, s.partId, s.qty)
      await moveStock(tx, { lotId, qty: -s.qty, kind: 'rework', userId, bagId: bag.id, orderId: bag.orderId, reason: `Rework of bag ${bag.code} to revision ${label}: ${s.designators} added` })
    }
    await applyItemChanges(tx, bag.id, plan.items)
    await tx.update(tables.bags).set({ revisionId: toRevisionId, reworkState: 'done' }).where(eq(tables.bags.id, bag.id))
    await tx.insert(tables.bagReworks).values({ bagId: bag.id, fromRevisionId: bag.revisionId, toRevisionId, decision: 'reworked', added: plan.add, removed: plan.remove, userId })
    await tx.insert(tables.bagEvents).values({ bagId: bag.id, kind: 'rework', userId, note: `Reworked to revision ${label}: ${plan.add.length} added, ${plan.remove.length} taken out` })
    return { bagId: bag.id, code: bag.code, decision: 'reworked' as const, added: plan.add.length, removed: plan.remove.length }
  })
}

/** Leaves a sealed bag on its old revision; the decision and the list it would have needed are kept. */
export async function keepBagOnRevision(db: Db, bagId: number, toRevisionId: number, userId: number) {
  return db.transaction(async (tx) => {
    const bag = await lockReworkBag(tx, bagId, toRevisionId)
    const plan = await planBagRework(tx, { id: bag.id, revisionId: bag.revisionId, orderOptionIds: bag.optionIds ?? [] }, toRevisionId)
    const labels = await revisionLabels(tx, [bag.revisionId, toRevisionId])
    await tx.update(tables.bags).set({ reworkState: 'kept' }).where(eq(tables.bags.id, bag.id))
    await tx.insert(tables.bagReworks).values({ bagId: bag.id, fromRevisionId: bag.revisionId, toRevisionId, decision: 'kept', added: plan.add, removed: plan.remove, userId })
    await tx.insert(tables.bagEvents).values({ bagId: bag.id, kind: 'rework', userId, note: `Left on revision ${labels.get(bag.revisionId)} (revision ${labels.get(toRevisionId)} released)` })
    return { bagId: bag.id, code: bag.code, decision: 'kept' as const }
  })
}

/** Where a part taken out of a bag goes back: the lot it was packed from, else the part's newest lot. */
async function returnLot(tx: Tx, bagId: number, partId: number) {
  const [packed] = await tx.select({ lotId: tables.bagEvents.lotId }).from(tables.bagEvents)
    .where(and(eq(tables.bagEvents.bagId, bagId), eq(tables.bagEvents.partId, partId), eq(tables.bagEvents.kind, 'pack'), isNotNull(tables.bagEvents.lotId)))
    .orderBy(desc(tables.bagEvents.id)).limit(1)
  if (packed?.lotId) return packed.lotId
  const [lot] = await tx.select({ id: tables.lots.id }).from(tables.lots).where(eq(tables.lots.partId, partId)).orderBy(desc(tables.lots.receivedOn), desc(tables.lots.id)).limit(1)
  if (!lot) throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `${await partName(tx, partId)} has no lot to go back into: receive it into a bin first` })
  return lot.id
}

/** The first lot in walk order holding enough of the part, after what other orders have set aside. */
async function takeLot(tx: Tx, partId: number, qty: number) {
  const free = (await availableByPart(tx, [partId])).get(partId)
  if (!free || free.available < qty) {
    throw createError({ statusCode: 409, statusMessage: 'Not enough stock', message: `Only ${Math.max(0, free?.available ?? 0)} of ${await partName(tx, partId)} are free (${free?.onHand ?? 0} on hand, ${free?.reserved ?? 0} set aside); ${qty} needed` })
  }
  const lots = await tx.select({ id: tables.lots.id, onHand: tables.lots.onHand, bin: tables.bins.code }).from(tables.lots).innerJoin(tables.bins, eq(tables.bins.id, tables.lots.binId))
    .where(and(eq(tables.lots.partId, partId), gte(tables.lots.onHand, qty))).orderBy(asc(tables.bins.walkOrder), asc(tables.lots.id)).limit(1)
  if (!lots[0]) throw createError({ statusCode: 409, statusMessage: 'Not enough stock', message: `No single bin holds ${qty} of ${await partName(tx, partId)}: move stock together first` })
  return lots[0].id
}

async function partName(tx: Reader, partId: number) {
  const [p] = await tx.select({ name: tables.parts.name }).from(tables.parts).where(eq(tables.parts.id, partId))
  return p?.name ?? `part ${partId}`
}

async function applyItemChanges(tx: Tx, bagId: number, changes: ItemChange[]) {
  for (const c of changes) {
    if (c.kind === 'delete') await tx.delete(tables.bagItems).where(and(eq(tables.bagItems.id, c.itemId), eq(tables.bagItems.bagId, bagId)))
    else if (c.kind === 'update') {
      await tx.update(tables.bagItems).set({ lineId: c.lineId, stageId: c.stageId, partId: c.partId, standInPartId: c.standInPartId, standInWarning: c.standInWarning, qtyNeeded: c.qty, qtyPacked: c.qty })
        .where(and(eq(tables.bagItems.id, c.itemId), eq(tables.bagItems.bagId, bagId)))
    }
    else await tx.insert(tables.bagItems).values({ bagId, lineId: c.lineId, stageId: c.stageId, partId: c.partId, qtyNeeded: c.qty, qtyPacked: c.qty })
  }
}

/** Whether a sealed bag waits for a rework decision (the door refuses to hand it over until then). */
export async function pendingReworkOf(db: Reader, bag: { id: number, revisionId: number }) {
  const [rev] = await db.select({ kitId: tables.revisions.kitId, releasedAt: tables.revisions.releasedAt }).from(tables.revisions).where(eq(tables.revisions.id, bag.revisionId))
  const to = rev ? (await newestReleased(db)).get(rev.kitId) : undefined
  if (!to || to.id === bag.revisionId || (to.releasedAt?.getTime() ?? 0) < (rev!.releasedAt?.getTime() ?? 0)) return null
  const [done] = await db.select({ id: tables.bagReworks.id }).from(tables.bagReworks).where(and(eq(tables.bagReworks.bagId, bag.id), eq(tables.bagReworks.toRevisionId, to.id)))
  return done ? null : { toRevisionId: to.id, label: to.label }
}
