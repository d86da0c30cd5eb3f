// A write that lost its database connection may have committed or not: the connection can die
// between COMMIT and its answer (a Galera node killed: the other nodes then apply what it had
// replicated). The only honest answer comes from the database once it answers again.
import type { Knex } from 'knex'

/**
 * Asks `landed` on the writer, waiting up to `waitMs` for one to answer (after a failover), with
 * Galera's causal read on so that everything the cluster accepted has been applied first.
 * true or false: the write's fate; null: the database did not answer in time.
 */
export async function committedAfterLoss(db: Knex, landed: (trx: Knex.Transaction) => Promise<boolean>, waitMs = 20_000): Promise<boolean | null> {
  const end = Date.now() + waitMs
  while (Date.now() < end) {
    try {
      return await db.transaction(async (trx) => {
        // Without wsrep (one server) the setting is harmless or absent; either way the read is current.
        await trx.raw('SET SESSION wsrep_sync_wait = 1').catch(() => {})
        try {
          return await landed(trx)
        } finally {
          await trx.raw('SET SESSION wsrep_sync_wait = 0').catch(() => {})
        }
      })
    } catch {
      await new Promise((r) => setTimeout(r, 500))
    }
  }
  return null
}

/** True for the 503 that server/utils/db.ts answers when the database went away under a request. */
export function isUnavailableAnswer(error: unknown): boolean {
  return (error as { statusCode?: number })?.statusCode === 503
}
