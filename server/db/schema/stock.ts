import { date, index, int, json, mysqlEnum, mysqlTable, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core'
import { timestamps } from './common'
import { users } from './auth'
import { parts } from './parts'

export const bins = mysqlTable('bins', {
  id: int('id').autoincrement().primaryKey(),
  code: varchar('code', { length: 24 }).notNull(),
  place: varchar('place', { length: 160 }).notNull().default(''),
  walkOrder: int('walk_order').notNull().default(0),
  ...timestamps,
}, t => [uniqueIndex('bins_code_uq').on(t.code)])

/** One receipt of a part into a bin. onHand is a cache of the ledger sum for this lot. */
export const lots = mysqlTable('lots', {
  id: int('id').autoincrement().primaryKey(),
  partId: int('part_id').notNull().references(() => parts.id, { onDelete: 'restrict' }),
  binId: int('bin_id').notNull().references(() => bins.id, { onDelete: 'restrict' }),
  qtyReceived: int('qty_received').notNull(),
  onHand: int('on_hand').notNull().default(0),
  unitCostMinor: int('unit_cost_minor').notNull().default(0),
  currency: varchar('currency', { length: 3 }).notNull().default('GBP'),
  supplier: varchar('supplier', { length: 120 }),
  supplierRef: varchar('supplier_ref', { length: 120 }),
  receivedOn: date('received_on', { mode: 'string' }).notNull(),
  note: varchar('note', { length: 500 }),
  ...timestamps,
}, t => [index('lots_part_idx').on(t.partId), index('lots_bin_idx').on(t.binId)])

export const LEDGER_KINDS = ['receive', 'move-out', 'move-in', 'pick', 'return', 'count', 'scrap', 'spares', 'rework'] as const

/** Append-only record of every stock movement; qty is signed. */
export const ledger = mysqlTable('ledger', {
  id: int('id').autoincrement().primaryKey(),
  lotId: int('lot_id').notNull().references(() => lots.id, { onDelete: 'restrict' }),
  partId: int('part_id').notNull(),
  binId: int('bin_id').notNull(),
  kind: mysqlEnum('kind', LEDGER_KINDS).notNull(),
  qty: int('qty').notNull(),
  userId: int('user_id').references(() => users.id, { onDelete: 'set null' }),
  reason: varchar('reason', { length: 255 }),
  orderId: int('order_id'),
  bagId: int('bag_id'),
  reportId: int('report_id'),
  createdAt: timestamp('created_at', { mode: 'date', fsp: 3 }).notNull().defaultNow(),
}, t => [index('ledger_lot_idx').on(t.lotId), index('ledger_part_idx').on(t.partId), index('ledger_created_idx').on(t.createdAt)])

/** Supplier offers for the buy list: price breaks, minimum quantity and pack size. */
export const supplierOffers = mysqlTable('supplier_offers', {
  id: int('id').autoincrement().primaryKey(),
  partId: int('part_id').notNull().references(() => parts.id, { onDelete: 'cascade' }),
  supplier: varchar('supplier', { length: 120 }).notNull(),
  supplierRef: varchar('supplier_ref', { length: 120 }),
  currency: varchar('currency', { length: 3 }).notNull().default('GBP'),
  minQty: int('min_qty').notNull().default(1),
  packSize: int('pack_size').notNull().default(1),
  breaks: json('breaks').$type<{ qty: number, unitPriceMinor: number }[]>().notNull(),
  ...timestamps,
}, t => [index('supplier_offers_part_idx').on(t.partId)])
