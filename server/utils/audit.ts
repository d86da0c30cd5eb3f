import type { Knex } from 'knex'
import type { Actor } from './guard'

/** Append-only: the app inserts audit rows and never updates or deletes them. */
export async function audit(
  db: Knex | Knex.Transaction,
  actor: Pick<Actor, 'id' | 'organisationId'> | null,
  entry: { entity: string; entityId: string | number; action: string; before?: unknown; after?: unknown },
) {
  await db('audit_log').insert({
    user_id: actor?.id ?? null,
    organisation_id: actor?.organisationId ?? null,
    entity: entry.entity,
    entity_id: String(entry.entityId),
    action: entry.action,
    before_value: entry.before === undefined ? null : JSON.stringify(entry.before),
    after_value: entry.after === undefined ? null : JSON.stringify(entry.after),
  })
}
