// The engine row checked against the actor. Kept apart from fleet-scope (which reads the fleet's
// life) so that life and oil can look up an engine without importing each other in a loop.
import type { Knex } from 'knex'
import type { Actor } from '../utils/guard'
import { canSee } from '../utils/guard'
import { notFound } from '../utils/errors'

/** Raw engine row, checked against the actor (404 for another team's engine). */
export async function engineRowFor(db: Knex | Knex.Transaction, actor: Actor, id: number, opts: { forUpdate?: boolean } = {}) {
  const qb = db('engines').where('id', id)
  if (opts.forUpdate) qb.forUpdate()
  const row = await qb.first()
  if (!row || !canSee(actor, { supplierId: row.supplier_id, teamId: row.team_id })) notFound('Engine')
  return row
}
