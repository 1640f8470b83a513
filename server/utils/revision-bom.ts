import { asc, eq } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import * as schema from '../db/schema'
import { effectiveBom, type BomLine, type OptionGroup } from '../../shared/utils/bom'

type AnyDb = MySql2Database<typeof schema>

/** A revision's lines and option groups in the shapes the shared BOM functions take (ids as strings). Explicit imports: the seed uses it too. */
export async function loadRevisionBom(db: AnyDb, revisionId: number) {
  const [lines, stages, groups, opts] = await Promise.all([
    db.select().from(schema.bomLines).where(eq(schema.bomLines.revisionId, revisionId)).orderBy(asc(schema.bomLines.sortOrder), asc(schema.bomLines.id)),
    db.select().from(schema.stages).where(eq(schema.stages.revisionId, revisionId)).orderBy(asc(schema.stages.sortOrder)),
    db.select().from(schema.optionGroups).where(eq(schema.optionGroups.revisionId, revisionId)).orderBy(asc(schema.optionGroups.sortOrder)),
    db.select().from(schema.options).where(eq(schema.options.revisionId, revisionId)).orderBy(asc(schema.options.sortOrder)),
  ])
  const stageById = new Map(stages.map(s => [s.id, s]))
  const bomLines: BomLine[] = lines.map(l => ({
    id: String(l.id),
    designators: l.designators,
    qty: l.qty,
    partId: l.partId == null ? null : String(l.partId),
    valueText: l.valueText,
    stage: l.stageId ? stageById.get(l.stageId)?.name ?? '' : '',
    stageOrder: l.stageId ? stageById.get(l.stageId)?.sortOrder ?? 0 : 0,
    noStandIns: l.noStandIns,
    notes: l.notes,
    optionId: l.optionId == null ? null : String(l.optionId),
    replacesLineId: l.replacesLineId == null ? null : String(l.replacesLineId),
    removesLineId: l.removesLineId == null ? null : String(l.removesLineId),
  }))
  const optionGroups: OptionGroup[] = groups.map(g => ({
    id: String(g.id),
    name: g.name,
    rule: g.rule,
    options: opts.filter(o => o.groupId === g.id).map(o => ({ id: String(o.id), name: o.name })),
  }))
  return { lines: bomLines, groups: optionGroups, stages, rows: lines }
}

/** The effective BOM of a revision for a choice of option ids (throws a readable Error on an invalid choice). */
export async function loadEffectiveBom(db: AnyDb, revisionId: number, optionIds: number[]) {
  const bom = await loadRevisionBom(db, revisionId)
  return { ...bom, effective: effectiveBom(bom.lines, bom.groups, optionIds.map(String)) }
}
