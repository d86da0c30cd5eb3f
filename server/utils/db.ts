import knexFactory, { type Knex } from 'knex'
import { knexConfig } from '../../db/knexfile'

let instance: Knex | undefined

// One pool per server process, created on first use from runtimeConfig.databaseUrl.
export function useDb(): Knex {
  if (!instance) instance = knexFactory(knexConfig(useRuntimeConfig().databaseUrl))
  return instance
}

export async function closeDb() {
  if (instance) {
    const db = instance
    instance = undefined
    await db.destroy()
  }
}

/** MariaDB DECIMAL arrives as a string: convert at the repository boundary. */
export function num(v: unknown): number {
  return v === null || v === undefined ? 0 : Number(v)
}
export function numOrNull(v: unknown): number | null {
  return v === null || v === undefined ? null : Number(v)
}
export function json<T>(v: unknown, fallback: T): T {
  if (v === null || v === undefined) return fallback
  // mysql2 may hand JSON columns over parsed already; a parsed JSON string stays a string.
  if (typeof v === 'string') {
    try {
      return JSON.parse(v) as T
    } catch {
      return v as T
    }
  }
  return v as T
}
export function iso(v: unknown): string | null {
  if (v === null || v === undefined) return null
  return (v instanceof Date ? v : new Date(String(v))).toISOString()
}

const DB_DOWN_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'PROTOCOL_CONNECTION_LOST', 'ER_CON_COUNT_ERROR', 'ER_SERVER_SHUTDOWN', 'PROTOCOL_SEQUENCE_TIMEOUT'])

/** True when an error means the database cannot be reached (as opposed to a bad query). */
export function isDbUnavailable(error: unknown): boolean {
  for (let e: any = error, depth = 0; e && depth < 4; e = e.cause, depth++) {
    if (DB_DOWN_CODES.has(e.code) || e.fatal === true || /Knex: Timeout acquiring a connection/.test(String(e.message))) return true
  }
  return false
}

export function dbUnavailable(): never {
  throw createError({ statusCode: 503, statusMessage: 'Service Unavailable', message: 'The database cannot be reached at the moment. Nothing was changed; try again in a minute.' })
}
