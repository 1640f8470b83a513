import { timestamp } from 'drizzle-orm/mysql-core'

/** Creation and update times, spread into every table that people edit. */
export const timestamps = {
  createdAt: timestamp('created_at', { mode: 'date' }).notNull().defaultNow(),
  updatedAt: timestamp('updated_at', { mode: 'date' }).notNull().defaultNow().onUpdateNow(),
}
