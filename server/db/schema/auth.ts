import { boolean, index, int, json, mysqlEnum, mysqlTable, primaryKey, timestamp, uniqueIndex, varchar } from 'drizzle-orm/mysql-core'
import { timestamps } from './common'

export const ROLES = ['organiser', 'packer', 'builder'] as const

export const users = mysqlTable('users', {
  id: int('id').autoincrement().primaryKey(),
  email: varchar('email', { length: 254 }).notNull(),
  name: varchar('name', { length: 120 }).notNull(),
  passwordHash: varchar('password_hash', { length: 255 }).notNull(),
  /** Club members pay the member price. */
  member: boolean('member').notNull().default(true),
  callsign: varchar('callsign', { length: 16 }),
  ...timestamps,
}, t => [uniqueIndex('users_email_uq').on(t.email)])

export const userRoles = mysqlTable('user_roles', {
  userId: int('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  role: mysqlEnum('role', ROLES).notNull(),
}, t => [primaryKey({ columns: [t.userId, t.role] })])

/** Single-use tokens for invitations and password resets; only a hash is stored. */
export const authTokens = mysqlTable('auth_tokens', {
  id: int('id').autoincrement().primaryKey(),
  purpose: mysqlEnum('purpose', ['invite', 'reset']).notNull(),
  tokenHash: varchar('token_hash', { length: 64 }).notNull(),
  email: varchar('email', { length: 254 }).notNull(),
  userId: int('user_id').references(() => users.id, { onDelete: 'cascade' }),
  roles: json('roles').$type<string[]>(),
  createdBy: int('created_by').references(() => users.id, { onDelete: 'set null' }),
  expiresAt: timestamp('expires_at', { mode: 'date' }).notNull(),
  usedAt: timestamp('used_at', { mode: 'date' }),
  createdAt: timestamp('created_at', { mode: 'date' }).notNull().defaultNow(),
}, t => [uniqueIndex('auth_tokens_hash_uq').on(t.tokenHash)])

/** Failed sign-ins, kept in the database so several app processes throttle alike. */
export const signInFailures = mysqlTable('sign_in_failures', {
  id: int('id').autoincrement().primaryKey(),
  key: varchar('key', { length: 300 }).notNull(),
  failedAt: timestamp('failed_at', { mode: 'date', fsp: 3 }).notNull().defaultNow(),
}, t => [index('sign_in_failures_key_idx').on(t.key, t.failedAt)])

export const auditLog = mysqlTable('audit_log', {
  id: int('id').autoincrement().primaryKey(),
  userId: int('user_id').references(() => users.id, { onDelete: 'set null' }),
  action: varchar('action', { length: 64 }).notNull(),
  subjectType: varchar('subject_type', { length: 32 }).notNull(),
  subjectId: varchar('subject_id', { length: 64 }),
  detail: json('detail').$type<Record<string, unknown>>(),
  createdAt: timestamp('created_at', { mode: 'date' }).notNull().defaultNow(),
}, t => [index('audit_subject_idx').on(t.subjectType, t.subjectId)])
