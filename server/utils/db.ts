import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import * as schema from '../db/schema'

export { and, asc, desc, eq, gt, gte, inArray, isNull, isNotNull, like, lt, lte, ne, not, or, sql } from 'drizzle-orm'
export const tables = schema

export type Db = MySql2Database<typeof schema>
/** A transaction handle, for helpers that must run inside the caller's transaction. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0]

let pool: mysql.Pool | undefined
let db: Db | undefined

/** The process-wide Drizzle handle over a mysql2 pool (created on first use). */
export function useDb(): Db {
  if (!db) {
    const url = useRuntimeConfig().databaseUrl
    pool = mysql.createPool({ uri: url, connectionLimit: Number(process.env.KW_DB_POOL || 20), timezone: 'Z', dateStrings: ['DATE'], decimalNumbers: true,
      // No stack capture per query (mysql2's default): errors keep their message and code, and each query saves a stack walk.
      trace: false })
    db = drizzle(pool, { schema, mode: 'default' })
  }
  return db
}

let batchPool: mysql.Pool | undefined

/**
 * A small second pool whose connections accept several statements in one round trip, for the one
 * place that needs it: the packing station's pack, whose whole transaction goes to MariaDB at once
 * (each round trip costs the app and the database a system call and a wake-up; a scan made nine).
 * Only fixed SQL text with `?` parameters goes through it; everything else uses useDb().
 */
export function useBatchPool(): mysql.Pool {
  batchPool ??= mysql.createPool({ uri: useRuntimeConfig().databaseUrl, connectionLimit: Number(process.env.KW_DB_BATCH_POOL || 10), timezone: 'Z', dateStrings: ['DATE'], decimalNumbers: true, trace: false, multipleStatements: true })
  return batchPool
}

/** Closes the pools (server shutdown). */
export async function closeDb() {
  await Promise.all([pool?.end(), batchPool?.end()])
  pool = undefined
  batchPool = undefined
  db = undefined
}
