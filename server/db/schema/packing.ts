import { index, int, mysqlEnum, mysqlTable, timestamp, uniqueIndex, varchar, text, json } from 'drizzle-orm/mysql-core'
import { timestamps } from './common'
import { users } from './auth'
import { revisions, bomLines } from './kits'
import { buildDays, orders } from './selling'

export const BAG_STATES = ['open', 'packing', 'sealed', 'collected'] as const

export const bags = mysqlTable('bags', {
  id: int('id').autoincrement().primaryKey(),
  code: varchar('code', { length: 16 }).notNull(),
  orderId: int('order_id').notNull().references(() => orders.id, { onDelete: 'restrict' }),
  buildDayId: int('build_day_id').notNull().references(() => buildDays.id, { onDelete: 'restrict' }),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'restrict' }),
  state: mysqlEnum('state', BAG_STATES).notNull().default('open'),
  claimedBy: int('claimed_by').references(() => users.id, { onDelete: 'set null' }),
  claimedAt: timestamp('claimed_at', { mode: 'date' }),
  sealedBy: int('sealed_by').references(() => users.id, { onDelete: 'set null' }),
  sealedAt: timestamp('sealed_at', { mode: 'date' }),
  collectedAt: timestamp('collected_at', { mode: 'date' }),
  reworkState: mysqlEnum('rework_state', ['none', 'needed', 'done', 'kept']).notNull().default('none'),
  ...timestamps,
}, t => [uniqueIndex('bags_code_uq').on(t.code), uniqueIndex('bags_order_uq').on(t.orderId), index('bags_day_state_idx').on(t.buildDayId, t.state)])

/** What goes into a bag: one row per effective BOM line, with what was actually packed. */
export const bagItems = mysqlTable('bag_items', {
  id: int('id').autoincrement().primaryKey(),
  bagId: int('bag_id').notNull().references(() => bags.id, { onDelete: 'cascade' }),
  lineId: int('line_id').notNull().references(() => bomLines.id, { onDelete: 'restrict' }),
  stageId: int('stage_id'),
  partId: int('part_id').notNull(),
  qtyNeeded: int('qty_needed').notNull(),
  qtyPacked: int('qty_packed').notNull().default(0),
  /** Stand-in actually packed, and its warning, recorded for the builder's sheet. */
  standInPartId: int('stand_in_part_id'),
  standInWarning: varchar('stand_in_warning', { length: 255 }),
}, t => [index('bag_items_bag_idx').on(t.bagId)])

/** Every scan and seal at the packing station: the bag's history. */
export const bagEvents = mysqlTable('bag_events', {
  id: int('id').autoincrement().primaryKey(),
  bagId: int('bag_id').notNull().references(() => bags.id, { onDelete: 'cascade' }),
  bagItemId: int('bag_item_id'),
  kind: mysqlEnum('kind', ['claim', 'release', 'pack', 'undo', 'refused', 'seal', 'unseal', 'collect', 'rework']).notNull(),
  lotId: int('lot_id'),
  binId: int('bin_id'),
  partId: int('part_id'),
  qty: int('qty'),
  undone: int('undone').notNull().default(0),
  userId: int('user_id').references(() => users.id, { onDelete: 'set null' }),
  note: varchar('note', { length: 255 }),
  createdAt: timestamp('created_at', { mode: 'date', fsp: 3 }).notNull().defaultNow(),
}, t => [index('bag_events_bag_idx').on(t.bagId), index('bag_events_lot_pack_idx').on(t.lotId, t.kind, t.undone, t.bagId, t.qty)])

export const reports = mysqlTable('reports', {
  id: int('id').autoincrement().primaryKey(),
  orderId: int('order_id').notNull().references(() => orders.id, { onDelete: 'restrict' }),
  bagId: int('bag_id').references(() => bags.id, { onDelete: 'set null' }),
  userId: int('user_id').notNull().references(() => users.id, { onDelete: 'restrict' }),
  lineIds: json('line_ids').$type<number[]>().notNull(),
  somethingElse: varchar('something_else', { length: 255 }),
  qty: int('qty').notNull().default(1),
  reason: mysqlEnum('reason', ['missing', 'damaged', 'wrong', 'extra']).notNull(),
  comment: text('comment'),
  state: mysqlEnum('state', ['open', 'handling', 'resolved', 'declined']).notNull().default('open'),
  resolution: mysqlEnum('resolution', ['handed-out', 'replaced', 'not-needed']),
  declineReason: varchar('decline_reason', { length: 255 }),
  handledBy: int('handled_by').references(() => users.id, { onDelete: 'set null' }),
  ...timestamps,
}, t => [index('reports_state_idx').on(t.state), index('reports_user_idx').on(t.userId)])

export const reportPhotos = mysqlTable('report_photos', {
  id: int('id').autoincrement().primaryKey(),
  reportId: int('report_id').notNull().references(() => reports.id, { onDelete: 'cascade' }),
  storageKey: varchar('storage_key', { length: 255 }).notNull(),
  contentType: varchar('content_type', { length: 32 }).notNull(),
  size: int('size').notNull(),
  createdAt: timestamp('created_at', { mode: 'date' }).notNull().defaultNow(),
})
