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
  if (typeof v === 'string') return JSON.parse(v) as T
  return v as T
}
export function iso(v: unknown): string | null {
  if (v === null || v === undefined) return null
  return (v instanceof Date ? v : new Date(String(v))).toISOString()
}
