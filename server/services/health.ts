import type { Knex } from 'knex'

/** True when the database answers. */
export async function databaseReady(db: Knex): Promise<boolean> {
  try {
    await db.raw('SELECT 1')
    return true
  } catch {
    return false
  }
}
