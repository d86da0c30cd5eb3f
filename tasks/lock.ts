// One instance at a time: MariaDB's named lock, held by one dedicated connection for the length of
// the run. If that instance dies, the server frees the lock with the connection.
import type { Knex } from 'knex'

export type ReleaseLock = () => Promise<void>

export interface TaskLock {
  /** Answers a release function, or null at once when another holder has it. */
  tryAcquire(name: string): Promise<ReleaseLock | null>
}

export function mariadbLock(db: Knex): TaskLock {
  return {
    async tryAcquire(name) {
      const client = db.client as any
      const conn = await client.acquireConnection()
      let held = false
      try {
        const [rows] = await db.raw('SELECT GET_LOCK(?, 0) AS got', [name]).connection(conn)
        held = Number(rows[0]?.got) === 1
      } finally {
        if (!held) await client.releaseConnection(conn)
      }
      if (!held) return null
      return async () => {
        try {
          await db.raw('SELECT RELEASE_LOCK(?)', [name]).connection(conn)
        } catch {
          // A connection that may still hold the lock must not go back to the pool.
          conn.destroy?.()
        } finally {
          await client.releaseConnection(conn)
        }
      }
    },
  }
}

/** For tests of the database-level idempotence: every caller gets the "lock". */
export const noLock: TaskLock = { tryAcquire: async () => async () => {} }
