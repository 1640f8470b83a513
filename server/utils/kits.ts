// Kits and their BOM revisions: reading, editing drafts, copying, releasing, diffs, imports and
// the workbook's input. Explicit imports (no Nuxt auto-imports): the benchmark imports this file.
import { and, asc, desc, eq, inArray, or, sql } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import { createError } from 'h3'
import { z } from 'zod'
import * as schema from '../db/schema'
import { diffRevisions, type BomLine } from '../../shared/utils/bom'
import { readRows, type ImportField, type ImportRow } from '../../shared/utils/bom-import'
import { compressDesignators, expandDesignators } from '../../shared/utils/designators'
import { valueQueries } from '../../shared/utils/values'
import { indexImportCatalogue, matchImportRow, newPartFrom, readRowValue, type CataloguePart, type NewPartDraft, type PreviewRow } from './bom-import-file'
import { loadEffectiveBom, loadRevisionBom } from './revision-bom'
import { partValueWays, type BomWorkbookInput, type WorkbookLine } from './workbook'

type AnyDb = MySql2Database<typeof schema>
type AnyTx = Parameters<Parameters<AnyDb['transaction']>[0]>[0]
type Reader = Pick<AnyDb, 'select'>
type RevisionRow = typeof schema.revisions.$inferSelect

function fail(statusCode: number, message: string, data?: unknown): never {
  const statusMessage = { 400: 'Invalid input', 404: 'Not found', 409: 'Conflict', 422: 'Unprocessable' }[statusCode] ?? 'Error'
  throw createError({ statusCode, statusMessage, message, data })
}

const isDuplicate = (e: unknown) => (e as { code?: string, cause?: { code?: string } })?.code === 'ER_DUP_ENTRY'
  || (e as { cause?: { code?: string } })?.cause?.code === 'ER_DUP_ENTRY'
const isForeignKey = (e: unknown) => /ER_ROW_IS_REFERENCED/.test(String((e as { code?: string })?.code ?? (e as { cause?: { code?: string } })?.cause?.code ?? ''))

// ---- kits ----

export interface KitInput { name: string, description?: string | null, designerCredit?: string | null, transmits?: boolean }

function slugOf(name: string): string {
  return name.toLowerCase().normalize('NFKD').replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 70) || 'kit'
}

/** Every kit with its revisions (newest first) and line counts. */
export async function listKits(db: Reader) {
  const [kits, revs] = await Promise.all([
    db.select().from(schema.kits).orderBy(asc(schema.kits.name)),
    db.select({ id: schema.revisions.id, kitId: schema.revisions.kitId, label: schema.revisions.label, state: schema.revisions.state, createdAt: schema.revisions.createdAt })
      .from(schema.revisions).orderBy(desc(schema.revisions.id)),
  ])
  return kits.map(k => ({
    id: k.id, name: k.name, slug: k.slug, description: k.description, designerCredit: k.designerCredit,
    hasPicture: !!k.pictureKey, revisions: revs.filter(r => r.kitId === k.id),
  }))
}

/** Creates a kit; its slug comes from the name (a number is added when taken). */
export async function createKit(db: AnyDb, input: KitInput): Promise<number> {
  const base = slugOf(input.name)
  const taken = new Set((await db.select({ slug: schema.kits.slug }).from(schema.kits).where(sql`${schema.kits.slug} like ${`${base}%`}`)).map(r => r.slug))
  let slug = base
  for (let n = 2; taken.has(slug); n++) slug = `${base}-${n}`
  try {
    const [row] = await db.insert(schema.kits).values({ name: input.name, slug, description: input.description ?? null, designerCredit: input.designerCredit ?? null, transmits: input.transmits ?? false }).$returningId()
    return row!.id
  }
  catch (e) {
    if (isDuplicate(e)) fail(409, 'Another kit was just created with the same name; try again.')
    throw e
  }
}

export async function requireKit(db: Reader, kitId: number) {
  const [kit] = await db.select().from(schema.kits).where(eq(schema.kits.id, kitId))
  if (!kit) fail(404, `No kit ${kitId}`)
  return kit
}

/** A kit with its revisions (newest first), each with its line count and parent's label. */
export async function kitDetail(db: Reader, kitId: number) {
  const kit = await requireKit(db, kitId)
  const revs = await db.select({
    id: schema.revisions.id, label: schema.revisions.label, state: schema.revisions.state, parentId: schema.revisions.parentId,
    notes: schema.revisions.notes, releasedAt: schema.revisions.releasedAt, createdAt: schema.revisions.createdAt,
  }).from(schema.revisions).where(eq(schema.revisions.kitId, kitId)).orderBy(desc(schema.revisions.id))
  const counts = revs.length
    ? await db.select({ revisionId: schema.bomLines.revisionId, n: sql<number>`cast(count(*) as signed)` }).from(schema.bomLines)
      .where(inArray(schema.bomLines.revisionId, revs.map(r => r.id))).groupBy(schema.bomLines.revisionId)
    : []
  const lineCount = new Map(counts.map(c => [c.revisionId, Number(c.n)]))
  const labelOf = new Map(revs.map(r => [r.id, r.label]))
  return {
    kit: { ...kit, hasPicture: !!kit.pictureKey },
    revisions: revs.map(r => ({ ...r, lines: lineCount.get(r.id) ?? 0, parentLabel: r.parentId ? labelOf.get(r.parentId) ?? null : null })),
  }
}

// ---- revisions ----

/** The next free label after the kit's labels: A, B … Z, AA, AB … */
export function nextRevisionLabel(labels: string[]): string {
  const toNum = (s: string) => [...s].reduce((n, c) => n * 26 + (c.charCodeAt(0) - 64), 0)
  const toLabel = (n: number) => {
    let s = ''
    for (; n > 0; n = Math.floor((n - 1) / 26)) s = String.fromCharCode(65 + ((n - 1) % 26)) + s
    return s
  }
  const used = labels.filter(l => /^[A-Z]{1,3}$/.test(l)).map(toNum)
  const set = new Set(labels)
  let n = used.length ? Math.max(...used) + 1 : 1
  while (set.has(toLabel(n))) n++
  return toLabel(n)
}

async function labelsOf(db: Reader, kitId: number) {
  return (await db.select({ label: schema.revisions.label }).from(schema.revisions).where(eq(schema.revisions.kitId, kitId))).map(r => r.label)
}

const FROZEN = { released: 'released and frozen', retired: 'retired' } as const

/** Locks a revision row for this transaction; 404 when missing, 409 unless it is a draft. */
export async function lockDraft(tx: AnyTx, revisionId: number): Promise<RevisionRow> {
  const [rev] = await tx.select().from(schema.revisions).where(eq(schema.revisions.id, revisionId)).for('update')
  if (!rev) fail(404, `No revision ${revisionId}`)
  if (rev.state !== 'draft') fail(409, `Revision ${rev.label} is ${FROZEN[rev.state]}: no change is possible. Make a new revision to change the BOM.`, { state: rev.state })
  return rev
}

export async function requireRevision(db: Reader, revisionId: number): Promise<RevisionRow> {
  const [rev] = await db.select().from(schema.revisions).where(eq(schema.revisions.id, revisionId))
  if (!rev) fail(404, `No revision ${revisionId}`)
  return rev
}

/** The kit's newest revision (the parent of the next one), if it has any. */
async function newestRevision(db: Reader, kitId: number): Promise<RevisionRow | undefined> {
  return (await db.select().from(schema.revisions).where(eq(schema.revisions.kitId, kitId)).orderBy(desc(schema.revisions.id)).limit(1))[0]
}

/** Copies a revision's option groups and options into another; the maps take old ids to new, and option ids to names. */
async function copyOptionGroups(tx: AnyTx, fromId: number, toId: number) {
  const [groups, opts] = await Promise.all([
    tx.select().from(schema.optionGroups).where(eq(schema.optionGroups.revisionId, fromId)).orderBy(asc(schema.optionGroups.id)),
    tx.select().from(schema.options).where(eq(schema.options.revisionId, fromId)).orderBy(asc(schema.options.id)),
  ])
  const groupMap = new Map<number, number>()
  for (const g of groups) {
    const [row] = await tx.insert(schema.optionGroups).values({ revisionId: toId, name: g.name, rule: g.rule, sortOrder: g.sortOrder }).$returningId()
    groupMap.set(g.id, row!.id)
  }
  const optionMap = new Map<number, number>()
  const optionName = new Map<number, string>()
  for (const o of opts) {
    const [row] = await tx.insert(schema.options).values({ revisionId: toId, groupId: groupMap.get(o.groupId)!, name: o.name, sortOrder: o.sortOrder }).$returningId()
    optionMap.set(o.id, row!.id)
    optionName.set(o.id, o.name)
  }
  return { groupMap, optionMap, optionName }
}

/** Copies stages, option groups, options and lines (with their replace/remove links) into another revision. */
async function copyContents(tx: AnyTx, fromId: number, toId: number) {
  const [stages, lines] = await Promise.all([
    tx.select().from(schema.stages).where(eq(schema.stages.revisionId, fromId)).orderBy(asc(schema.stages.id)),
    tx.select().from(schema.bomLines).where(eq(schema.bomLines.revisionId, fromId)).orderBy(asc(schema.bomLines.id)),
  ])
  const stageMap = new Map<number, number>()
  for (const s of stages) {
    const [row] = await tx.insert(schema.stages).values({ revisionId: toId, name: s.name, sortOrder: s.sortOrder }).$returningId()
    stageMap.set(s.id, row!.id)
  }
  const { optionMap } = await copyOptionGroups(tx, fromId, toId)
  const lineMap = new Map<number, number>()
  for (const l of lines) {
    const [row] = await tx.insert(schema.bomLines).values({
      revisionId: toId, designators: l.designators, qty: l.qty, partId: l.partId, valueText: l.valueText,
      stageId: l.stageId ? stageMap.get(l.stageId) ?? null : null, noStandIns: l.noStandIns, notes: l.notes,
      optionId: l.optionId ? optionMap.get(l.optionId) ?? null : null, sortOrder: l.sortOrder,
    }).$returningId()
    lineMap.set(l.id, row!.id)
  }
  for (const l of lines) {
    if (!l.replacesLineId && !l.removesLineId) continue
    await tx.update(schema.bomLines).set({
      replacesLineId: l.replacesLineId ? lineMap.get(l.replacesLineId) ?? null : null,
      removesLineId: l.removesLineId ? lineMap.get(l.removesLineId) ?? null : null,
    }).where(eq(schema.bomLines.id, lineMap.get(l.id)!))
  }
}

/**
 * A new draft revision of a kit, as a copy of `fromId` (default: the kit's newest revision;
 * empty when the kit has none). One transaction: the copy is whole or absent.
 */
export async function newRevision(db: AnyDb, kitId: number, opts: { fromId?: number | null, label?: string | null, notes?: string | null }, userId: number | null) {
  await requireKit(db, kitId)
  try {
    return await db.transaction(async (tx) => {
      const [kitRow] = await tx.select({ id: schema.kits.id }).from(schema.kits).where(eq(schema.kits.id, kitId)).for('update')
      if (!kitRow) fail(404, `No kit ${kitId}`)
      let from: RevisionRow | undefined
      if (opts.fromId) {
        from = (await tx.select().from(schema.revisions).where(eq(schema.revisions.id, opts.fromId)))[0]
        if (!from || from.kitId !== kitId) fail(404, `Revision ${opts.fromId} is not a revision of this kit`)
      }
      else {
        from = await newestRevision(tx, kitId)
      }
      const label = opts.label?.trim() || nextRevisionLabel(await labelsOf(tx, kitId))
      const [row] = await tx.insert(schema.revisions).values({ kitId, label, state: 'draft', parentId: from?.id ?? null, notes: opts.notes ?? null }).$returningId()
      if (from) await copyContents(tx, from.id, row!.id)
      await tx.insert(schema.auditLog).values({ userId, action: 'revision.create', subjectType: 'revision', subjectId: String(row!.id), detail: { kitId, label, from: from?.label ?? null } })
      return { id: row!.id, label }
    })
  }
  catch (e) {
    if (isDuplicate(e)) fail(409, `This kit already has a revision labelled "${opts.label}"; choose another label.`)
    throw e
  }
}

/** Lines that still need a catalogue part (qty above 0 and no part chosen). */
function unresolved(lines: (typeof schema.bomLines.$inferSelect)[]) {
  return lines.filter(l => l.qty > 0 && l.partId == null)
}

/** Draft → released: refused (409) while any line lacks a part or the options are inconsistent. */
export async function releaseRevision(db: AnyDb, revisionId: number, userId: number | null) {
  return db.transaction(async (tx) => {
    const rev = await lockDraft(tx, revisionId)
    const lines = await tx.select().from(schema.bomLines).where(eq(schema.bomLines.revisionId, revisionId))
    if (lines.length === 0) fail(409, `Revision ${rev.label} has no lines: add or import lines before releasing it.`)
    const open = unresolved(lines)
    if (open.length > 0) {
      const list = open.slice(0, 8).map(l => l.designators || l.valueText || `line ${l.id}`).join('; ')
      fail(409, `Choose a catalogue part for every line before releasing: ${open.length} line${open.length === 1 ? ' has' : 's have'} only value text (${list}${open.length > 8 ? ' …' : ''}).`, { lineIds: open.map(l => l.id) })
    }
    const groups = await tx.select({ id: schema.optionGroups.id, name: schema.optionGroups.name }).from(schema.optionGroups).where(eq(schema.optionGroups.revisionId, revisionId))
    const withOptions = new Set((await tx.select({ groupId: schema.options.groupId }).from(schema.options).where(eq(schema.options.revisionId, revisionId))).map(o => o.groupId))
    const empty = groups.filter(g => !withOptions.has(g.id))
    if (empty.length) fail(409, `Option group ${empty.map(g => `"${g.name}"`).join(', ')} has no options: add options or delete the group before releasing.`)
    await tx.update(schema.revisions).set({ state: 'released', releasedAt: new Date() }).where(and(eq(schema.revisions.id, revisionId), eq(schema.revisions.state, 'draft')))
    await tx.insert(schema.auditLog).values({ userId, action: 'revision.release', subjectType: 'revision', subjectId: String(revisionId), detail: { label: rev.label } })
    return { id: revisionId, state: 'released' as const }
  })
}

/** Released → retired (no longer offered; still readable). */
export async function retireRevision(db: AnyDb, revisionId: number, userId: number | null) {
  const rev = await requireRevision(db, revisionId)
  if (rev.state === 'draft') fail(409, `Revision ${rev.label} is a draft: delete it instead of retiring it.`)
  if (rev.state === 'retired') fail(409, `Revision ${rev.label} is already retired.`)
  const [res] = await db.update(schema.revisions).set({ state: 'retired' }).where(and(eq(schema.revisions.id, revisionId), eq(schema.revisions.state, 'released')))
  if (res.affectedRows !== 1) fail(409, `Revision ${rev.label} changed meanwhile; reload the page.`)
  await db.insert(schema.auditLog).values({ userId, action: 'revision.retire', subjectType: 'revision', subjectId: String(revisionId), detail: { label: rev.label } })
  return { id: revisionId, state: 'retired' as const }
}

/** Deletes a draft (its lines, stages and options go with it); children point to its parent. */
export async function deleteDraft(db: AnyDb, revisionId: number, userId: number | null) {
  try {
    await db.transaction(async (tx) => {
      const rev = await lockDraft(tx, revisionId)
      await tx.update(schema.revisions).set({ parentId: rev.parentId }).where(eq(schema.revisions.parentId, revisionId))
      await tx.delete(schema.revisions).where(eq(schema.revisions.id, revisionId))
      await tx.insert(schema.auditLog).values({ userId, action: 'revision.delete', subjectType: 'revision', subjectId: String(revisionId), detail: { label: rev.label, kitId: rev.kitId } })
    })
  }
  catch (e) {
    if (isForeignKey(e)) fail(409, 'This draft is used elsewhere (an offering or a bag) and cannot be deleted.')
    throw e
  }
}

/** Changes a draft's label or notes. */
export async function updateRevision(db: AnyDb, revisionId: number, patch: { label?: string, notes?: string | null }) {
  try {
    await db.transaction(async (tx) => {
      await lockDraft(tx, revisionId)
      await tx.update(schema.revisions).set(patch).where(eq(schema.revisions.id, revisionId))
    })
  }
  catch (e) {
    if (isDuplicate(e)) fail(409, `This kit already has a revision labelled "${patch.label}".`)
    throw e
  }
}

// ---- the revision page ----

const PART_COLUMNS = {
  id: schema.parts.id, kind: schema.parts.kind, name: schema.parts.name, value: schema.parts.value, unit: schema.parts.unit,
  tolerancePct: schema.parts.tolerancePct, powerW: schema.parts.powerW, voltageV: schema.parts.voltageV, currentA: schema.parts.currentA,
  dielectric: schema.parts.dielectric, mounting: schema.parts.mounting, package: schema.parts.package, makerPartNumber: schema.parts.makerPartNumber,
}

async function partsById(db: Reader, ids: (number | null)[]) {
  const wanted = [...new Set(ids.filter((x): x is number => x != null))]
  if (wanted.length === 0) return new Map<number, CataloguePart>()
  const rows = await db.select(PART_COLUMNS).from(schema.parts).where(inArray(schema.parts.id, wanted))
  return new Map(rows.map(r => [r.id, r as CataloguePart]))
}

function designatorProblems(lines: { id: number, designators: string, qty: number, optionId: number | null, replacesLineId: number | null }[]) {
  const problems: { lineId: number, message: string }[] = []
  const owner = new Map<string, number>()
  for (const l of lines) {
    let list: string[]
    try {
      list = expandDesignators(l.designators)
    }
    catch (e) {
      problems.push({ lineId: l.id, message: `Designators: ${(e as Error).message}` })
      continue
    }
    if (list.length > 0 && l.qty > 0 && list.length !== l.qty) problems.push({ lineId: l.id, message: `Quantity ${l.qty} differs from its ${list.length} designator${list.length === 1 ? '' : 's'}` })
    if (l.optionId) continue
    for (const d of list) {
      const other = owner.get(d)
      if (other !== undefined) problems.push({ lineId: l.id, message: `${d} is also on another line` })
      else owner.set(d, l.id)
    }
  }
  return problems
}

/** Everything the revision page shows: kit, revision, stages, options, lines with parts and readings, problems. */
export async function revisionDetail(db: Reader, revisionId: number) {
  const rev = await requireRevision(db, revisionId)
  const [kit, bom, siblings] = await Promise.all([
    requireKit(db, rev.kitId),
    loadRevisionBom(db as AnyDb, revisionId),
    db.select({ id: schema.revisions.id, label: schema.revisions.label, state: schema.revisions.state }).from(schema.revisions)
      .where(eq(schema.revisions.kitId, rev.kitId)).orderBy(desc(schema.revisions.id)),
  ])
  const parts = await partsById(db, bom.rows.map(l => l.partId))
  const lines = bom.rows.map((l) => {
    const part = l.partId ? parts.get(l.partId) ?? null : null
    return { ...l, part, value: part ? partValueWays(part) : null }
  })
  const problems = [
    ...designatorProblems(bom.rows),
    ...unresolved(bom.rows).map(l => ({ lineId: l.id, message: 'No catalogue part chosen yet' })),
  ]
  return {
    kit: { id: kit.id, name: kit.name, slug: kit.slug },
    revision: rev,
    stages: bom.stages,
    groups: bom.groups.map(g => ({ ...g, id: Number(g.id), options: g.options.map(o => ({ ...o, id: Number(o.id) })) })),
    lines,
    problems,
    siblings,
  }
}

// ---- lines, stages and options of a draft ----

export interface LineInput {
  designators?: string
  qty?: number
  partId?: number | null
  valueText?: string | null
  stageId?: number | null
  noStandIns?: boolean
  notes?: string | null
  optionId?: number | null
  replacesLineId?: number | null
  removesLineId?: number | null
}

const optionalId = z.number().int().positive().nullish()

/** A line as the line editor sends it (every field optional for PATCH). */
export const lineBodySchema = z.object({
  designators: z.string().trim().max(5000, 'At most 5000 characters').optional(),
  qty: z.number().int('A whole number').min(0, 'At least 0').max(100_000, 'At most 100000').optional(),
  partId: optionalId,
  valueText: z.string().trim().max(160, 'At most 160 characters').nullish(),
  stageId: optionalId,
  noStandIns: z.boolean().optional(),
  notes: z.string().trim().max(500, 'At most 500 characters').nullish(),
  optionId: optionalId,
  replacesLineId: optionalId,
  removesLineId: optionalId,
})

const defined = <T extends object>(o: T): Partial<T> => Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as Partial<T>

async function belongs(tx: AnyTx, table: typeof schema.stages | typeof schema.options, id: number, revisionId: number, what: string) {
  const [row] = await tx.select({ revisionId: table.revisionId }).from(table).where(eq(table.id, id))
  if (!row || row.revisionId !== revisionId) fail(400, `${what} ${id} is not part of this revision`)
}

async function checkBomLine(tx: AnyTx, revisionId: number, line: Required<LineInput>, lineId: number | null) {
  let list: string[]
  try {
    list = expandDesignators(line.designators)
  }
  catch (e) {
    fail(400, `Designators: ${(e as Error).message}`, { fields: { designators: (e as Error).message } })
  }
  if (line.partId != null) {
    const [p] = await tx.select({ id: schema.parts.id }).from(schema.parts).where(eq(schema.parts.id, line.partId))
    if (!p) fail(400, `No catalogue part ${line.partId}`, { fields: { partId: 'No such part' } })
  }
  if (line.stageId != null) await belongs(tx, schema.stages, line.stageId, revisionId, 'Stage')
  if (line.optionId != null) await belongs(tx, schema.options, line.optionId, revisionId, 'Option')
  for (const target of [line.replacesLineId, line.removesLineId]) {
    if (target == null) continue
    if (line.optionId == null) fail(400, 'Only an option\'s line can replace or remove a base line', { fields: { optionId: 'Choose the option this line belongs to' } })
    if (target === lineId) fail(400, 'A line cannot replace or remove itself')
    const [t] = await tx.select({ revisionId: schema.bomLines.revisionId, optionId: schema.bomLines.optionId }).from(schema.bomLines).where(eq(schema.bomLines.id, target))
    if (!t || t.revisionId !== revisionId || t.optionId != null) fail(400, `Line ${target} is not a base line of this revision`)
  }
  if (line.replacesLineId != null && line.removesLineId != null) fail(400, 'A line either replaces or removes a base line, not both')
  if (line.qty === 0 && line.removesLineId == null) fail(400, 'Quantity 0 is only for an option line that removes a base line', { fields: { qty: 'Give a quantity of 1 or more' } })
  return list.length ? compressDesignators(list) : ''
}

const LINE_DEFAULTS: Required<LineInput> = { designators: '', qty: 1, partId: null, valueText: null, stageId: null, noStandIns: false, notes: null, optionId: null, replacesLineId: null, removesLineId: null }

/** Adds a line to a draft (designators stored compressed). */
export async function addBomLine(db: AnyDb, revisionId: number, input: LineInput) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const line = { ...LINE_DEFAULTS, ...defined(input) }
    const designators = await checkBomLine(tx, revisionId, line, null)
    const [{ next }] = await tx.select({ next: sql<number>`coalesce(max(${schema.bomLines.sortOrder}), 0) + 1` }).from(schema.bomLines).where(eq(schema.bomLines.revisionId, revisionId)) as [{ next: number }]
    const [row] = await tx.insert(schema.bomLines).values({ ...line, designators, revisionId, sortOrder: Number(next) }).$returningId()
    return { id: row!.id }
  })
}

/** Changes a draft's line; a part chosen clears the value text. */
export async function updateBomLine(db: AnyDb, revisionId: number, lineId: number, patch: LineInput) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [current] = await tx.select().from(schema.bomLines).where(and(eq(schema.bomLines.id, lineId), eq(schema.bomLines.revisionId, revisionId)))
    if (!current) fail(404, `No line ${lineId} in this revision`)
    const line = { ...LINE_DEFAULTS, ...current, ...defined(patch) }
    if (patch.partId != null && patch.valueText === undefined) line.valueText = null
    const designators = await checkBomLine(tx, revisionId, line, lineId)
    await tx.update(schema.bomLines).set({
      designators, qty: line.qty, partId: line.partId, valueText: line.valueText, stageId: line.stageId, noStandIns: line.noStandIns,
      notes: line.notes, optionId: line.optionId, replacesLineId: line.replacesLineId, removesLineId: line.removesLineId,
    }).where(eq(schema.bomLines.id, lineId))
    return { id: lineId }
  })
}

/** Deletes a draft's line; refused while an option line replaces or removes it. */
export async function deleteBomLine(db: AnyDb, revisionId: number, lineId: number) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [dependent] = await tx.select({ id: schema.bomLines.id, designators: schema.bomLines.designators }).from(schema.bomLines)
      .where(and(eq(schema.bomLines.revisionId, revisionId), sql`(${schema.bomLines.replacesLineId} = ${lineId} or ${schema.bomLines.removesLineId} = ${lineId})`)).limit(1)
    if (dependent) fail(409, `An option line (${dependent.designators || `line ${dependent.id}`}) replaces or removes this line: change that line first.`)
    const [res] = await tx.delete(schema.bomLines).where(and(eq(schema.bomLines.id, lineId), eq(schema.bomLines.revisionId, revisionId)))
    if (res.affectedRows !== 1) fail(404, `No line ${lineId} in this revision`)
  })
}

/** Adds a stage at the end of the build order. */
export async function addRevisionStage(db: AnyDb, revisionId: number, name: string) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const stages = await tx.select().from(schema.stages).where(eq(schema.stages.revisionId, revisionId))
    if (stages.some(s => s.name.toLowerCase() === name.toLowerCase())) fail(409, `There is already a stage called "${name}"`, { fields: { name: 'Already used' } })
    const [row] = await tx.insert(schema.stages).values({ revisionId, name, sortOrder: Math.max(0, ...stages.map(s => s.sortOrder)) + 1 }).$returningId()
    return { id: row!.id }
  })
}

/** Renames a stage and/or moves it to a position (1-based) in the build order. */
export async function updateRevisionStage(db: AnyDb, revisionId: number, stageId: number, patch: { name?: string, position?: number }) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const stages = await tx.select().from(schema.stages).where(eq(schema.stages.revisionId, revisionId)).orderBy(asc(schema.stages.sortOrder), asc(schema.stages.id))
    const stage = stages.find(s => s.id === stageId)
    if (!stage) fail(404, `No stage ${stageId} in this revision`)
    if (patch.name !== undefined) {
      if (stages.some(s => s.id !== stageId && s.name.toLowerCase() === patch.name!.toLowerCase())) fail(409, `There is already a stage called "${patch.name}"`, { fields: { name: 'Already used' } })
      await tx.update(schema.stages).set({ name: patch.name }).where(eq(schema.stages.id, stageId))
    }
    if (patch.position !== undefined) {
      const order = stages.filter(s => s.id !== stageId)
      order.splice(Math.min(Math.max(patch.position - 1, 0), order.length), 0, stage)
      for (const [i, s] of order.entries()) await tx.update(schema.stages).set({ sortOrder: i + 1 }).where(eq(schema.stages.id, s.id))
    }
  })
}

/** Deletes a stage; its lines keep going, without a stage. */
export async function deleteRevisionStage(db: AnyDb, revisionId: number, stageId: number) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [res] = await tx.delete(schema.stages).where(and(eq(schema.stages.id, stageId), eq(schema.stages.revisionId, revisionId)))
    if (res.affectedRows !== 1) fail(404, `No stage ${stageId} in this revision`)
  })
}

export async function addRevisionOptionGroup(db: AnyDb, revisionId: number, input: { name: string, rule: 'one' | 'zero-or-one' }) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [{ next }] = await tx.select({ next: sql<number>`coalesce(max(${schema.optionGroups.sortOrder}), 0) + 1` }).from(schema.optionGroups).where(eq(schema.optionGroups.revisionId, revisionId)) as [{ next: number }]
    const [row] = await tx.insert(schema.optionGroups).values({ revisionId, name: input.name, rule: input.rule, sortOrder: Number(next) }).$returningId()
    return { id: row!.id }
  })
}

export async function updateRevisionOptionGroup(db: AnyDb, revisionId: number, groupId: number, patch: { name?: string, rule?: 'one' | 'zero-or-one' }) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [res] = await tx.update(schema.optionGroups).set(patch).where(and(eq(schema.optionGroups.id, groupId), eq(schema.optionGroups.revisionId, revisionId)))
    if (res.affectedRows !== 1) fail(404, `No option group ${groupId} in this revision`)
  })
}

/** Deletes an option group with its options and their lines. */
export async function deleteRevisionOptionGroup(db: AnyDb, revisionId: number, groupId: number) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [res] = await tx.delete(schema.optionGroups).where(and(eq(schema.optionGroups.id, groupId), eq(schema.optionGroups.revisionId, revisionId)))
    if (res.affectedRows !== 1) fail(404, `No option group ${groupId} in this revision`)
  })
}

export async function addRevisionOption(db: AnyDb, revisionId: number, groupId: number, name: string) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [g] = await tx.select().from(schema.optionGroups).where(and(eq(schema.optionGroups.id, groupId), eq(schema.optionGroups.revisionId, revisionId)))
    if (!g) fail(404, `No option group ${groupId} in this revision`)
    const [{ next }] = await tx.select({ next: sql<number>`coalesce(max(${schema.options.sortOrder}), 0) + 1` }).from(schema.options).where(eq(schema.options.groupId, groupId)) as [{ next: number }]
    const [row] = await tx.insert(schema.options).values({ revisionId, groupId, name, sortOrder: Number(next) }).$returningId()
    return { id: row!.id }
  })
}

export async function updateRevisionOption(db: AnyDb, revisionId: number, optionId: number, name: string) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [res] = await tx.update(schema.options).set({ name }).where(and(eq(schema.options.id, optionId), eq(schema.options.revisionId, revisionId)))
    if (res.affectedRows !== 1) fail(404, `No option ${optionId} in this revision`)
  })
}

/** Deletes an option and its lines. */
export async function deleteRevisionOption(db: AnyDb, revisionId: number, optionId: number) {
  return db.transaction(async (tx) => {
    await lockDraft(tx, revisionId)
    const [res] = await tx.delete(schema.options).where(and(eq(schema.options.id, optionId), eq(schema.options.revisionId, revisionId)))
    if (res.affectedRows !== 1) fail(404, `No option ${optionId} in this revision`)
  })
}

const UNIT_OF_KIND: Record<string, string> = { resistor: 'Ω', capacitor: 'F', inductor: 'H', crystal: 'Hz' }

/** Catalogue parts whose name, maker's part number or value text hold the words, or whose value reads the same (4k7 = 4.7 kΩ). */
export async function searchPartsForLine(db: Reader, q: string, limit = 20) {
  const words = q.trim().split(/\s+/).filter(Boolean).slice(0, 5)
  const conds = words.map(w => sql`(${schema.parts.name} like ${`%${w}%`} or ${schema.parts.makerPartNumber} like ${`%${w}%`} or ${schema.parts.valueText} like ${`%${w}%`})`)
  const byValue = valueQueries(q).map((r) => {
    const near = sql`${schema.parts.value} between ${r.value * (1 - 1e-9)} and ${r.value * (1 + 1e-9)}`
    const kinds = Object.keys(UNIT_OF_KIND).filter(k => UNIT_OF_KIND[k] === r.unit) as (typeof schema.PART_KINDS)[number][]
    return r.unit && kinds.length ? and(near, inArray(schema.parts.kind, kinds)) : near
  })
  if (!conds.length && !byValue.length) return []
  return db.select({ id: schema.parts.id, kind: schema.parts.kind, name: schema.parts.name, package: schema.parts.package })
    .from(schema.parts).where(or(conds.length ? and(...conds) : undefined, ...byValue)).orderBy(asc(schema.parts.kind), asc(schema.parts.value), asc(schema.parts.name)).limit(limit)
}

// ---- diff ----

/** The difference from revision a to revision b (same kit), lines described with part names and options. */
export async function revisionDiff(db: Reader, aId: number, bId: number) {
  const [a, b] = await Promise.all([requireRevision(db, aId), requireRevision(db, bId)])
  if (a.kitId !== b.kitId) fail(400, 'Both revisions must belong to the same kit')
  const [ba, bb] = await Promise.all([loadRevisionBom(db as AnyDb, aId), loadRevisionBom(db as AnyDb, bId)])
  const optionName = new Map<string, string>()
  for (const g of [...ba.groups, ...bb.groups]) for (const o of g.options) optionName.set(o.id, `${g.name}: ${o.name}`)
  const parts = await partsById(db, [...ba.rows, ...bb.rows].map(l => l.partId))
  const view = (l: BomLine) => {
    const part = l.partId ? parts.get(Number(l.partId)) : undefined
    return {
      id: Number(l.id), designators: l.designators, qty: l.qty, stage: l.stage, noStandIns: !!l.noStandIns, notes: l.notes ?? null,
      part: part ? { id: part.id, name: part.name } : null, valueText: l.valueText ?? null,
      option: l.optionId ? optionName.get(l.optionId) ?? null : null,
    }
  }
  const d = diffRevisions(ba.lines, bb.lines, { scopeOf: l => (l.optionId ? optionName.get(l.optionId) ?? l.optionId : '') })
  const side = (r: RevisionRow) => ({ id: r.id, label: r.label, state: r.state })
  return {
    a: side(a),
    b: side(b),
    added: d.added.map(view),
    removed: d.removed.map(view),
    changed: d.changed.map(c => ({ before: view(c.before), after: view(c.after), fields: c.fields })),
    unchanged: d.unchanged,
  }
}

// ---- import ----

export type EditField = 'designators' | 'qty' | 'value' | 'stage' | 'notes'

export interface ImportInput {
  headers: string[]
  rows: string[][]
  firstRowNumber: number
  mapping: Record<number, ImportField>
  /** Corrections typed in the preview, by row number; they replace the cell's text. */
  edits?: Record<string, Partial<Record<EditField, string>>>
  /** Row numbers left out of the import. */
  skip?: number[]
}

export type RowDecision = { use: number } | { create: true } | { keepText: true }

export interface CommitInput extends ImportInput {
  fileName?: string
  label?: string | null
  notes?: string | null
  decisions?: Record<string, RowDecision>
  /** Copy the parent revision's option groups, options and option lines into the new draft. */
  carryOptions?: boolean
}

const IMPORT_FIELDS = ['designators', 'qty', 'value', 'package', 'description', 'mpn', 'stage', 'notes', 'ignore'] as const
const cellText = z.string().max(1000, 'A cell may hold at most 1000 characters')
const editText = z.string().trim().max(1000, 'At most 1000 characters').optional()

/** The import preview's body: the cells read from the file, the mapping, and the organiser's edits and skips. */
export const importBodySchema = z.object({
  headers: z.array(cellText).max(60),
  rows: z.array(z.array(cellText).max(60)).min(1, 'There is no row to read').max(5000, 'A BOM may have at most 5000 rows'),
  firstRowNumber: z.number().int().min(1).max(1_000_000),
  mapping: z.record(z.string().regex(/^\d+$/), z.enum(IMPORT_FIELDS)),
  edits: z.record(z.string().regex(/^\d+$/), z.object({ designators: editText, qty: editText, value: editText, stage: editText, notes: editText })).optional(),
  skip: z.array(z.number().int()).max(5000).optional(),
}).transform(v => ({ ...v, mapping: v.mapping as Record<number, ImportField> }))

/** The commit's body: the preview's body plus a label and each row's decision. */
export const importCommitSchema = z.object({
  fileName: z.string().max(255).optional(),
  label: z.string().trim().max(24, 'At most 24 characters').regex(/^[\w .-]*$/, 'Letters, digits, spaces, dots and dashes only').nullish(),
  notes: z.string().trim().max(2000).nullish(),
  decisions: z.record(z.string().regex(/^\d+$/), z.union([
    z.object({ use: z.number().int().positive() }),
    z.object({ create: z.literal(true) }),
    z.object({ keepText: z.literal(true) }),
  ])).optional(),
  carryOptions: z.boolean().optional(),
}).and(importBodySchema)

/** Applies the preview's edits and skips to the raw cells (a field without a column gets one). */
function applyEdits(input: ImportInput): { rows: string[][], mapping: Record<number, ImportField> } {
  const mapping: Record<number, ImportField> = { ...input.mapping }
  const width = Math.max(input.headers.length, ...input.rows.map(r => r.length))
  const columnOf = (field: EditField): number => {
    const found = Object.entries(mapping).find(([, f]) => f === field)
    if (found) return Number(found[0])
    const col = Math.max(width - 1, ...Object.keys(mapping).map(Number)) + 1
    mapping[col] = field
    return col
  }
  const skip = new Set(input.skip ?? [])
  const rows = input.rows.map((row, i) => {
    const n = input.firstRowNumber + i
    if (skip.has(n)) return []
    const edit = input.edits?.[String(n)]
    if (!edit) return row
    const out = [...row]
    for (const [field, value] of Object.entries(edit) as [EditField, string][]) out[columnOf(field)] = value
    return out
  })
  return { rows, mapping }
}

/** All catalogue parts in the shape the matcher takes. */
export async function loadImportCatalogue(db: Reader) {
  return indexImportCatalogue(await db.select(PART_COLUMNS).from(schema.parts) as CataloguePart[])
}

/**
 * Reads the rows as they will land: errors and warnings per row, how the value was read, and the
 * catalogue match. Throws 400 when the column mapping itself is unusable.
 */
export async function previewImport(db: Reader, input: ImportInput): Promise<{ rows: PreviewRow[], counts: Record<string, number> }> {
  const { rows: cells, mapping } = applyEdits(input)
  let read: ImportRow[]
  try {
    read = readRows(cells, mapping, { firstRowNumber: input.firstRowNumber })
  }
  catch (e) {
    fail(400, (e as Error).message, { fields: { mapping: (e as Error).message } })
  }
  const cat = await loadImportCatalogue(db)
  const rows = read.map((row) => {
    // A row whose designators could not be read still shows its kind from their letters.
    const lettered = /^[A-Za-z]+\d+/.exec(row.designatorText)?.[0]
    const r = readRowValue(row.designators.length || !lettered ? row.designators : [lettered.toUpperCase()], row.valueText || row.description)
    if (r.problem) row.warnings.push(`Value: ${r.problem}.`)
    if (r.note) row.warnings.push(`Value: ${r.note}.`)
    return { ...row, read: r, match: matchImportRow(row, r, cat) }
  })
  const counts = { rows: rows.length, errors: 0, warnings: 0, existing: 0, new: 0, choice: 0, unresolved: 0 }
  for (const r of rows) {
    if (r.errors.length) counts.errors++
    if (r.warnings.length) counts.warnings++
    counts[r.match.status]++
  }
  return { rows, counts }
}

type Resolved = { partId: number | null, create: NewPartDraft | null }

function resolveRow(row: PreviewRow, decision: RowDecision | undefined): Resolved | string {
  if (decision && 'use' in decision) return { partId: decision.use, create: null }
  if (decision && 'keepText' in decision) return { partId: null, create: null }
  if (decision && 'create' in decision) {
    if (row.read.problem) return `Row ${row.rowNumber}: a new part needs a readable value (${row.read.problem})`
    return { partId: null, create: row.match.newPart ?? newPartFrom(row.read, row) }
  }
  if (row.match.status === 'existing') return { partId: row.match.partId, create: null }
  if (row.match.status === 'new') return { partId: null, create: row.match.newPart }
  if (row.match.status === 'choice') return `Row ${row.rowNumber} needs a choice: pick one of the ${row.match.candidates.length} catalogue parts, make a new part, or keep the value text`
  return { partId: null, create: null }
}

async function createParts(tx: AnyTx, drafts: NewPartDraft[]): Promise<Map<string, number>> {
  const unique = new Map(drafts.map(d => [JSON.stringify(d), d]))
  const ids = new Map<string, number>()
  if (unique.size === 0) return ids
  // One statement: MariaDB hands out consecutive ids to a multi-row insert, which $returningId relies on.
  const rows = await tx.insert(schema.parts).values([...unique.values()]).$returningId()
  const made = await tx.select({ id: schema.parts.id, name: schema.parts.name }).from(schema.parts).where(inArray(schema.parts.id, rows.map(r => r.id)))
  const nameOf = new Map(made.map(p => [p.id, p.name]))
  ;[...unique.entries()].forEach(([key, draft], i) => {
    if (nameOf.get(rows[i]!.id) !== draft.name) throw new Error('New parts did not get consecutive ids (innodb_autoinc_lock_mode must be 0 or 1)')
    ids.set(key, rows[i]!.id)
  })
  return ids
}

async function stagesFor(tx: AnyTx, revisionId: number, rows: PreviewRow[]): Promise<Map<string, number>> {
  const names: string[] = []
  for (const r of rows) if (r.stage && !names.some(n => n.toLowerCase() === r.stage.toLowerCase())) names.push(r.stage.slice(0, 80))
  const ids = new Map<string, number>()
  for (const [i, name] of names.entries()) {
    const [row] = await tx.insert(schema.stages).values({ revisionId, name, sortOrder: i + 1 }).$returningId()
    ids.set(name.toLowerCase(), row!.id)
  }
  return ids
}

/**
 * Creates a draft revision from the previewed rows in one transaction: all rows or none. Refused
 * (422, nothing written) while a row has errors or a "needs a choice" row has no decision.
 * New parts are made from the reading where the row's decision (or its match) says so.
 */
export async function commitImport(db: AnyDb, kitId: number, input: CommitInput, userId: number | null) {
  await requireKit(db, kitId)
  try {
    return await db.transaction(async (tx) => {
      const { rows } = await previewImport(tx, input)
      if (rows.length === 0) fail(422, 'There is no row to import: every row is blank or skipped.')
      const broken = rows.filter(r => r.errors.length > 0)
      if (broken.length > 0) {
        fail(422, `${broken.length} row${broken.length === 1 ? ' has' : 's have'} errors (rows ${broken.slice(0, 10).map(r => r.rowNumber).join(', ')}${broken.length > 10 ? ' …' : ''}): fix or skip ${broken.length === 1 ? 'it' : 'them'}; nothing was imported.`, { rows: broken.map(r => ({ rowNumber: r.rowNumber, errors: r.errors })) })
      }
      const resolved = rows.map(r => resolveRow(r, input.decisions?.[String(r.rowNumber)]))
      const undecided = resolved.filter((x): x is string => typeof x === 'string')
      if (undecided.length > 0) fail(422, `${undecided.slice(0, 5).join('. ')}${undecided.length > 5 ? ` (and ${undecided.length - 5} more)` : ''}. Nothing was imported.`)
      const choices = resolved as Resolved[]
      const used = [...new Set(choices.map(c => c.partId).filter((x): x is number => x != null))]
      if (used.length) {
        const found = new Set((await tx.select({ id: schema.parts.id }).from(schema.parts).where(inArray(schema.parts.id, used))).map(p => p.id))
        const missing = used.filter(id => !found.has(id))
        if (missing.length) fail(422, `Catalogue part${missing.length === 1 ? '' : 's'} ${missing.join(', ')} no longer exist${missing.length === 1 ? 's' : ''}: preview again. Nothing was imported.`)
      }
      const newIds = await createParts(tx, choices.flatMap(c => (c.create ? [c.create] : [])))
      const parent = await newestRevision(tx, kitId)
      const label = input.label?.trim() || nextRevisionLabel(await labelsOf(tx, kitId))
      const notes = input.notes ?? (input.fileName ? `Imported from ${input.fileName}` : null)
      const [rev] = await tx.insert(schema.revisions).values({ kitId, label, state: 'draft', parentId: parent?.id ?? null, notes: notes?.slice(0, 2000) ?? null }).$returningId()
      const stageIds = await stagesFor(tx, rev!.id, rows)
      const values = rows.map((r, i) => {
        const c = choices[i]!
        const partId = c.create ? newIds.get(JSON.stringify(c.create))! : c.partId
        return {
          revisionId: rev!.id, designators: r.designators.length ? compressDesignators(r.designators) : '', qty: r.qty ?? r.designators.length,
          partId, valueText: partId ? null : (r.valueText || r.description).slice(0, 160) || null,
          stageId: r.stage ? stageIds.get(r.stage.slice(0, 80).toLowerCase()) ?? null : null, notes: r.notes ? r.notes.slice(0, 500) : null, sortOrder: i + 1,
        }
      })
      for (let i = 0; i < values.length; i += 500) await tx.insert(schema.bomLines).values(values.slice(i, i + 500))
      const carried = input.carryOptions && parent ? await carryOptionsInto(tx, parent, rev!.id) : null
      await tx.insert(schema.auditLog).values({ userId, action: 'bom.import', subjectType: 'revision', subjectId: String(rev!.id), detail: { kitId, label, file: input.fileName ?? null, lines: values.length, newParts: newIds.size, carriedOptions: carried ? { from: carried.from, groups: carried.groups, options: carried.options, lines: carried.lines } : null } })
      return { id: rev!.id, label, lines: values.length, newParts: newIds.size, carried }
    })
  }
  catch (e) {
    if (isDuplicate(e)) fail(409, `This kit already has a revision labelled "${input.label}"; choose another label.`)
    throw e
  }
}

/** A designator list in one canonical spelling (sorted, runs compressed), or the text as typed when it does not read. */
function canonicalDesignators(text: string) {
  try {
    return compressDesignators(expandDesignators(text))
  }
  catch {
    return text.trim()
  }
}

/** What the kit's newest revision offers as options: shown beside an import so the organiser can carry them over. */
export async function parentOptionsOfImport(db: Reader, kitId: number) {
  const parent = await newestRevision(db, kitId)
  if (!parent) return null
  const [groups, opts, [lines]] = await Promise.all([
    db.select().from(schema.optionGroups).where(eq(schema.optionGroups.revisionId, parent.id)).orderBy(asc(schema.optionGroups.sortOrder), asc(schema.optionGroups.id)),
    db.select().from(schema.options).where(eq(schema.options.revisionId, parent.id)).orderBy(asc(schema.options.sortOrder), asc(schema.options.id)),
    db.select({ n: sql<number>`count(*)` }).from(schema.bomLines).where(and(eq(schema.bomLines.revisionId, parent.id), sql`${schema.bomLines.optionId} is not null`)),
  ])
  if (!groups.length) return null
  return {
    revisionId: parent.id, label: parent.label, lines: Number(lines?.n ?? 0),
    groups: groups.map(g => ({ name: g.name, rule: g.rule, options: opts.filter(o => o.groupId === g.id).map(o => o.name) })),
  }
}

/**
 * Copies the option groups, options and option lines of `fromId` into an imported draft whose base
 * lines are already written. An option line that replaces or removes a base line is linked to the
 * imported line with the same designators; where the import has no such line the link is dropped
 * (the option line then adds its part) and said in `dropped`, for the organiser to check on the draft.
 */
async function carryOptionsInto(tx: AnyTx, from: { id: number, label: string }, toId: number) {
  const fromId = from.id
  const [[hasGroups], oldLines, oldStages, newBase, newStages] = await Promise.all([
    tx.select({ id: schema.optionGroups.id }).from(schema.optionGroups).where(eq(schema.optionGroups.revisionId, fromId)).limit(1),
    tx.select().from(schema.bomLines).where(eq(schema.bomLines.revisionId, fromId)).orderBy(asc(schema.bomLines.sortOrder), asc(schema.bomLines.id)),
    tx.select({ id: schema.stages.id, name: schema.stages.name }).from(schema.stages).where(eq(schema.stages.revisionId, fromId)),
    tx.select({ id: schema.bomLines.id, designators: schema.bomLines.designators, sortOrder: schema.bomLines.sortOrder }).from(schema.bomLines).where(eq(schema.bomLines.revisionId, toId)),
    tx.select({ id: schema.stages.id, name: schema.stages.name }).from(schema.stages).where(eq(schema.stages.revisionId, toId)),
  ])
  const result = { from: from.label, groups: 0, options: 0, lines: 0, dropped: [] as string[] }
  if (!hasGroups) return result
  const oldStageNames = new Map(oldStages.map(st => [st.id, st.name.toLowerCase()]))
  const stageByName = new Map(newStages.map(st => [st.name.toLowerCase(), st.id]))
  const baseByDesignators = new Map<string, number>()
  for (const l of newBase) if (l.designators && !baseByDesignators.has(canonicalDesignators(l.designators))) baseByDesignators.set(canonicalDesignators(l.designators), l.id)
  const oldById = new Map(oldLines.map(l => [l.id, l]))

  const { groupMap, optionMap, optionName } = await copyOptionGroups(tx, fromId, toId)
  // The base line an option line points at, found in the import by its designators.
  const relink = (oldId: number | null, line: typeof oldLines[number], verb: string) => {
    if (!oldId) return null
    const target = oldById.get(oldId)
    const found = target ? baseByDesignators.get(canonicalDesignators(target.designators)) : undefined
    if (found) return found
    result.dropped.push(`${optionName.get(line.optionId!) ?? 'An option'}: ${line.designators || 'a line'} ${verb} ${target?.designators || 'a line'}, which this import does not have`)
    return null
  }
  let sortOrder = newBase.reduce((m, l) => Math.max(m, l.sortOrder), 0)
  for (const l of oldLines) {
    if (l.optionId == null || !optionMap.has(l.optionId)) continue
    await tx.insert(schema.bomLines).values({
      revisionId: toId, designators: l.designators, qty: l.qty, partId: l.partId, valueText: l.valueText,
      stageId: l.stageId ? stageByName.get(oldStageNames.get(l.stageId) ?? '') ?? null : null, noStandIns: l.noStandIns, notes: l.notes,
      optionId: optionMap.get(l.optionId)!, sortOrder: ++sortOrder,
      replacesLineId: relink(l.replacesLineId, l, 'replaced'), removesLineId: relink(l.removesLineId, l, 'removed'),
    })
    result.lines++
  }
  result.groups = groupMap.size
  result.options = optionMap.size
  return result
}

// ---- the workbook's input ----

/** The workbook input for a revision and a choice of options (400 when the choice is invalid). */
export async function revisionWorkbookInput(db: Reader, revisionId: number, optionIds: number[]): Promise<{ input: BomWorkbookInput, fileStem: string }> {
  const rev = await requireRevision(db, revisionId)
  const kit = await requireKit(db, rev.kitId)
  let bom: Awaited<ReturnType<typeof loadEffectiveBom>>
  try {
    bom = await loadEffectiveBom(db as AnyDb, revisionId, optionIds)
  }
  catch (e) {
    fail(400, (e as Error).message)
  }
  const parts = await partsById(db, bom.effective.map(l => (l.partId ? Number(l.partId) : null)))
  const chosen = new Set(optionIds.map(String))
  const optionText = bom.groups.map(g => `${g.name}: ${g.options.filter(o => chosen.has(o.id)).map(o => o.name).join(', ') || 'none'}`)
  const lines: WorkbookLine[] = bom.effective.map((l) => {
    const part = l.partId ? parts.get(Number(l.partId)) : undefined
    return {
      designators: l.designators ? compressDesignators(expandDesignators(l.designators)) : '',
      qty: l.qty,
      stage: l.stage,
      part: part?.name ?? l.valueText ?? '',
      value: part ? partValueWays(part) : null,
      package: part?.package ?? null,
      notes: l.notes ?? null,
      noStandIns: !!l.noStandIns,
    }
  })
  const header: [string, string][] = [
    ['Kit', kit.name],
    ['Revision', `${rev.label} (${rev.state})`],
    ['Options', optionText.length ? optionText.join('; ') : 'none offered'],
  ]
  if (kit.designerCredit) header.push(['Designer', kit.designerCredit])
  const optionSlug = bom.groups.flatMap(g => g.options.filter(o => chosen.has(o.id)).map(o => o.name)).join('-')
  const fileStem = [kit.slug, `rev-${rev.label}`, optionSlug].filter(Boolean).join('-').toLowerCase().replace(/[^a-z0-9-]+/g, '-').replace(/-+/g, '-').replace(/-$/, '')
  return { input: { title: `${kit.name} — bill of materials`, header, stages: bom.stages.map(s => s.name), lines }, fileStem }
}
