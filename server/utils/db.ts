import knexFactory, { type Knex } from 'knex'
import { knexConfig } from '../../db/knexfile'
import { createDatabaseWriter, writerKnexConfig, type DatabaseWriter } from './db-writer'

let instance: Knex | undefined
let writer: DatabaseWriter | undefined

/**
 * One pool per server process, created on first use from runtimeConfig.databaseUrl. With
 * runtimeConfig.databaseFailoverUrls (further Galera nodes, in order) the pool follows the writer
 * endpoint of server/utils/db-writer.ts.
 */
export function useDb(): Knex {
  if (!instance) {
    const config = useRuntimeConfig()
    const failover = String(config.databaseFailoverUrls ?? '').split(',').map((u) => u.trim()).filter(Boolean)
    if (failover.length) {
      writer = createDatabaseWriter([String(config.databaseUrl), ...failover], Number(config.databaseProbeMs) || 1000)
      instance = answerOutagesAs503(knexFactory(writerKnexConfig(writer)))
    } else {
      instance = answerOutagesAs503(knexFactory(knexConfig(config.databaseUrl)))
    }
  }
  return instance
}

/** The writer endpoint, when failover nodes are configured. */
export function databaseWriter(): DatabaseWriter | undefined {
  return writer
}

/**
 * Whichever route meets an unreachable database answers 503 with a clear message: connection
 * and query failures that mean "database away" are turned into that error where they arise.
 */
function answerOutagesAs503(knex: Knex): Knex {
  const client = knex.client as any
  for (const method of ['acquireConnection', '_query']) {
    const original = client[method].bind(client)
    client[method] = async (...args: unknown[]) => {
      try {
        return await original(...args)
      } catch (error) {
        if (isDbUnavailable(error)) {
          writer?.suspect()
          dbUnavailable()
        }
        throw error
      }
    }
  }
  return knex
}

export async function closeDb() {
  if (instance) {
    const db = instance
    instance = undefined
    writer?.stop()
    writer = undefined
    await db.destroy()
  }
}

// Row value conversions live in db/ so the seeds use the same ones.
export { iso, json, num, numOrNull } from '../../db/values'

const DB_DOWN_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'PROTOCOL_CONNECTION_LOST', 'ER_CON_COUNT_ERROR', 'ER_SERVER_SHUTDOWN', 'PROTOCOL_SEQUENCE_TIMEOUT',
  // A Galera node outside the primary component: "WSREP has not yet prepared node for application use".
  'ER_UNKNOWN_COM_ERROR'])

/** True when an error means the database cannot be reached (as opposed to a bad query). */
export function isDbUnavailable(error: unknown): boolean {
  for (let e: any = error, depth = 0; e && depth < 4; e = e.cause, depth++) {
    if (DB_DOWN_CODES.has(e.code) || e.fatal === true || /Knex: Timeout acquiring a connection/.test(String(e.message))) return true
  }
  return false
}

/** Seconds a client is asked to wait after a 503 (the Retry-After header, server/plugins/04.unavailable.ts). */
export const RETRY_AFTER_SECONDS = 5

export function dbUnavailable(): never {
  throw createError({ statusCode: 503, statusMessage: 'Service Unavailable', message: 'The database cannot be reached at the moment. Nothing was changed; try again in a few seconds.' })
}
