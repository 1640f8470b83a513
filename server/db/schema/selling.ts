import { boolean, date, index, int, json, mysqlEnum, mysqlTable, text, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core'
import { timestamps } from './common'
import { users } from './auth'
import { parts } from './parts'
import { revisions } from './kits'

export const buildDays = mysqlTable('build_days', {
  id: int('id').autoincrement().primaryKey(),
  name: varchar('name', { length: 120 }).notNull(),
  date: date('date', { mode: 'string' }).notNull(),
  venue: varchar('venue', { length: 200 }).notNull(),
  seats: int('seats').notNull(),
  salesOpenAt: timestamp('sales_open_at', { mode: 'date' }).notNull(),
  salesCloseAt: timestamp('sales_close_at', { mode: 'date' }).notNull(),
  currency: varchar('currency', { length: 3 }).notNull().default('GBP'),
  holdMinutes: int('hold_minutes').notNull().default(30),
  ...timestamps,
})

/** A kit revision offered at a build day, with the options members may choose and its prices. */
export const offerings = mysqlTable('offerings', {
  id: int('id').autoincrement().primaryKey(),
  buildDayId: int('build_day_id').notNull().references(() => buildDays.id, { onDelete: 'cascade' }),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'restrict' }),
  allowedOptionIds: json('allowed_option_ids').$type<number[]>().notNull(),
  memberPriceMinor: int('member_price_minor').notNull(),
  nonMemberPriceMinor: int('non_member_price_minor').notNull(),
  ...timestamps,
}, t => [uniqueIndex('offerings_day_rev_uq').on(t.buildDayId, t.revisionId)])

/** Published prices for a revision: the history the pricing page shows. */
export const priceHistory = mysqlTable('price_history', {
  id: int('id').autoincrement().primaryKey(),
  revisionId: int('revision_id').notNull().references(() => revisions.id, { onDelete: 'cascade' }),
  optionIds: json('option_ids').$type<number[]>().notNull(),
  inputs: json('inputs').$type<Record<string, unknown>>().notNull(),
  breakdown: json('breakdown').$type<{ label: string, minor: number }[]>().notNull(),
  memberPriceMinor: int('member_price_minor').notNull(),
  nonMemberPriceMinor: int('non_member_price_minor').notNull(),
  currency: varchar('currency', { length: 3 }).notNull(),
  publishedBy: int('published_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: timestamp('created_at', { mode: 'date' }).notNull().defaultNow(),
})

export const ORDER_STATES = ['pending', 'paid', 'cancelled', 'expired', 'refunded'] as const

export const orders = mysqlTable('orders', {
  id: int('id').autoincrement().primaryKey(),
  buildDayId: int('build_day_id').notNull().references(() => buildDays.id, { onDelete: 'restrict' }),
  offeringId: int('offering_id').notNull().references(() => offerings.id, { onDelete: 'restrict' }),
  userId: int('user_id').notNull().references(() => users.id, { onDelete: 'restrict' }),
  optionIds: json('option_ids').$type<number[]>().notNull(),
  state: mysqlEnum('state', ORDER_STATES).notNull().default('pending'),
  amountMinor: int('amount_minor').notNull(),
  currency: varchar('currency', { length: 3 }).notNull(),
  memberPrice: boolean('member_price').notNull().default(true),
  seat: int('seat'),
  stripeSessionId: varchar('stripe_session_id', { length: 255 }),
  stripePaymentIntent: varchar('stripe_payment_intent', { length: 255 }),
  holdExpiresAt: timestamp('hold_expires_at', { mode: 'date' }),
  paidAt: timestamp('paid_at', { mode: 'date' }),
  cancelledAt: timestamp('cancelled_at', { mode: 'date' }),
  cancelReason: varchar('cancel_reason', { length: 255 }),
  ...timestamps,
}, t => [
  index('orders_day_state_idx').on(t.buildDayId, t.state),
  index('orders_user_idx').on(t.userId),
  uniqueIndex('orders_session_uq').on(t.stripeSessionId),
])

/** Stock set aside for an order: held during checkout, confirmed when paid, consumed when packed. */
export const reservations = mysqlTable('reservations', {
  id: int('id').autoincrement().primaryKey(),
  orderId: int('order_id').notNull().references(() => orders.id, { onDelete: 'cascade' }),
  lineId: int('line_id').notNull(),
  partId: int('part_id').notNull().references(() => parts.id, { onDelete: 'restrict' }),
  qty: int('qty').notNull(),
  state: mysqlEnum('state', ['held', 'confirmed', 'released', 'consumed']).notNull().default('held'),
  ...timestamps,
}, t => [index('reservations_part_state_idx').on(t.partId, t.state), index('reservations_order_idx').on(t.orderId)])

/** Each Stripe event id is processed once. */
export const stripeEvents = mysqlTable('stripe_events', {
  id: varchar('id', { length: 255 }).primaryKey(),
  type: varchar('type', { length: 80 }).notNull(),
  outcome: varchar('outcome', { length: 255 }),
  receivedAt: timestamp('received_at', { mode: 'date' }).notNull().defaultNow(),
})

export const waitlist = mysqlTable('waitlist', {
  id: int('id').autoincrement().primaryKey(),
  buildDayId: int('build_day_id').notNull().references(() => buildDays.id, { onDelete: 'cascade' }),
  offeringId: int('offering_id').notNull().references(() => offerings.id, { onDelete: 'cascade' }),
  userId: int('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  optionIds: json('option_ids').$type<number[]>().notNull(),
  state: mysqlEnum('state', ['waiting', 'offered', 'taken', 'lapsed', 'left']).notNull().default('waiting'),
  holdTokenHash: varchar('hold_token_hash', { length: 64 }),
  holdExpiresAt: timestamp('hold_expires_at', { mode: 'date' }),
  /** The pending order that holds stock and a seat while an offer is open. */
  orderId: int('order_id').references(() => orders.id, { onDelete: 'set null' }),
  ...timestamps,
}, t => [index('waitlist_day_idx').on(t.buildDayId, t.state), uniqueIndex('waitlist_token_uq').on(t.holdTokenHash)])

export const settings = mysqlTable('settings', {
  key: varchar('key', { length: 64 }).primaryKey(),
  value: json('value').$type<unknown>().notNull(),
  note: text('note'),
})
