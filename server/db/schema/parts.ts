import { boolean, double, index, int, mysqlEnum, mysqlTable, primaryKey, text, varchar } from 'drizzle-orm/mysql-core'
import { timestamps } from './common'

export const PART_KINDS = ['resistor', 'capacitor', 'inductor', 'crystal', 'diode', 'transistor', 'ic', 'connector', 'hardware', 'board', 'other'] as const

export const parts = mysqlTable('parts', {
  id: int('id').autoincrement().primaryKey(),
  kind: mysqlEnum('kind', PART_KINDS).notNull(),
  name: varchar('name', { length: 160 }).notNull(),
  /** Value in base SI units (ohms, farads, henries, hertz); null for parts without one. */
  value: double('value'),
  unit: varchar('unit', { length: 8 }),
  valueText: varchar('value_text', { length: 64 }),
  tolerancePct: double('tolerance_pct'),
  powerW: double('power_w'),
  voltageV: double('voltage_v'),
  currentA: double('current_a'),
  dielectric: varchar('dielectric', { length: 24 }),
  mounting: mysqlEnum('mounting', ['tht', 'smd']),
  polarised: boolean('polarised').notNull().default(false),
  package: varchar('package', { length: 64 }),
  pinoutNote: varchar('pinout_note', { length: 255 }),
  description: text('description'),
  makerPartNumber: varchar('maker_part_number', { length: 64 }),
  ...timestamps,
}, t => [index('parts_kind_value_idx').on(t.kind, t.value)])

export const swapGroups = mysqlTable('swap_groups', {
  id: int('id').autoincrement().primaryKey(),
  name: varchar('name', { length: 120 }).notNull(),
  warning: varchar('warning', { length: 255 }),
  ...timestamps,
})

export const swapGroupMembers = mysqlTable('swap_group_members', {
  groupId: int('group_id').notNull().references(() => swapGroups.id, { onDelete: 'cascade' }),
  partId: int('part_id').notNull().references(() => parts.id, { onDelete: 'restrict' }),
  direction: mysqlEnum('direction', ['both', 'replaces', 'replaced']).notNull().default('both'),
}, t => [primaryKey({ columns: [t.groupId, t.partId] })])

/** Parametric swap rules, switchable per kind (resistor, capacitor, inductor). */
export const swapSettings = mysqlTable('swap_settings', {
  kind: varchar('kind', { length: 24 }).primaryKey(),
  enabled: boolean('enabled').notNull().default(true),
})
