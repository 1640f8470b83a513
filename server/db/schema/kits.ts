import { boolean, index, int, mysqlEnum, mysqlTable, text, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core'
import { timestamps } from './common'
import { parts } from './parts'

export const kits = mysqlTable('kits', {
  id: int('id').autoincrement().primaryKey(),
  name: varchar('name', { length: 120 }).notNull(),
  slug: varchar('slug', { length: 80 }).notNull(),
  description: text('description'),
  designerCredit: varchar('designer_credit', { length: 255 }),
  pictureKey: varchar('picture_key', { length: 255 }),
  /** What the kit is: drives the RF/licence cautions on builder pages. */
  transmits: boolean('transmits').notNull().default(false),
  ...timestamps,
}, t => [uniqueIndex('kits_slug_uq').on(t.slug)])

export const revisions = mysqlTable('revisions', {
  id: int('id').autoincrement().primaryKey(),
  kitId: int('kit_id').notNull().references(() => kits.id, { onDelete: 'cascade' }),
  label: varchar('label', { length: 24 }).notNull(),
  state: mysqlEnum('state', ['draft', 'released', 'retired']).notNull().default('draft'),
  parentId: int('parent_id'),
  notes: text('notes'),
  releasedAt: timestamp('released_at', { mode: 'date' }),
  ...timestamps,
}, t => [uniqueIndex('revisions_kit_label_uq').on(t.kitId, t.label)])

export const stages = mysqlTable('stages', {
  id: int('id').autoincrement().primaryKey(),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'cascade' }),
  name: varchar('name', { length: 80 }).notNull(),
  sortOrder: int('sort_order').notNull().default(0),
}, t => [index('stages_revision_idx').on(t.revisionId)])

export const optionGroups = mysqlTable('option_groups', {
  id: int('id').autoincrement().primaryKey(),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'cascade' }),
  name: varchar('name', { length: 80 }).notNull(),
  rule: mysqlEnum('rule', ['one', 'zero-or-one']).notNull().default('one'),
  sortOrder: int('sort_order').notNull().default(0),
})

export const options = mysqlTable('options', {
  id: int('id').autoincrement().primaryKey(),
  groupId: int('group_id').notNull().references(() => optionGroups.id, { onDelete: 'cascade' }),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'cascade' }),
  name: varchar('name', { length: 80 }).notNull(),
  sortOrder: int('sort_order').notNull().default(0),
})

export const bomLines = mysqlTable('bom_lines', {
  id: int('id').autoincrement().primaryKey(),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'cascade' }),
  designators: text('designators').notNull(),
  qty: int('qty').notNull(),
  partId: int('part_id').references(() => parts.id, { onDelete: 'restrict' }),
  /** The designer's value text while no catalogue part is chosen yet. */
  valueText: varchar('value_text', { length: 160 }),
  stageId: int('stage_id').references(() => stages.id, { onDelete: 'set null' }),
  noStandIns: boolean('no_stand_ins').notNull().default(false),
  notes: varchar('notes', { length: 500 }),
  optionId: int('option_id').references(() => options.id, { onDelete: 'cascade' }),
  replacesLineId: int('replaces_line_id'),
  removesLineId: int('removes_line_id'),
  sortOrder: int('sort_order').notNull().default(0),
}, t => [index('bom_lines_revision_idx').on(t.revisionId), index('bom_lines_part_idx').on(t.partId)])
