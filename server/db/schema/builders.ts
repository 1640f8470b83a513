import { index, int, json, mysqlEnum, mysqlTable, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core'
import { users } from './auth'
import { revisions } from './kits'
import { bags, reports } from './packing'

/** Each state a missing-part report passes through, for the builder's page and the desk's history. */
export const reportEvents = mysqlTable('report_events', {
  id: int('id').autoincrement().primaryKey(),
  reportId: int('report_id').notNull().references(() => reports.id, { onDelete: 'cascade' }),
  state: mysqlEnum('state', ['open', 'handling', 'resolved', 'declined']).notNull(),
  resolution: mysqlEnum('resolution', ['handed-out', 'replaced', 'not-needed']),
  note: varchar('note', { length: 500 }),
  userId: int('user_id').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { mode: 'date', fsp: 3 }).notNull().defaultNow(),
}, t => [index('report_events_report_idx').on(t.reportId)])

export interface ReworkStep { lineId: number | null, designators: string, partId: number, qty: number, why: string }

/** The organiser's decision for a sealed bag when a newer revision came out: reworked to it, or kept. */
export const bagReworks = mysqlTable('bag_reworks', {
  id: int('id').autoincrement().primaryKey(),
  bagId: int('bag_id').notNull().references(() => bags.id, { onDelete: 'cascade' }),
  fromRevisionId: int('from_revision_id').notNull().references(() => revisions.id, { onDelete: 'restrict' }),
  toRevisionId: int('to_revision_id').notNull().references(() => revisions.id, { onDelete: 'restrict' }),
  decision: mysqlEnum('decision', ['reworked', 'kept']).notNull(),
  added: json('added').$type<ReworkStep[]>().notNull(),
  removed: json('removed').$type<ReworkStep[]>().notNull(),
  userId: int('user_id').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { mode: 'date' }).notNull().defaultNow(),
}, t => [uniqueIndex('bag_reworks_bag_to_uq').on(t.bagId, t.toRevisionId)])
