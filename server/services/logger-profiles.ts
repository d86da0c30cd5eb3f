// Saved column mappings of logger files, kept per organisation (a team's, or the supplier's for bench files).
import type { Knex } from 'knex'
import type { z } from 'zod'
import { headerSignature } from '#shared/domain/logger-mapping'
import type { LoggerProfileSchema } from '#shared/schemas/import'
import { ownOrganisation, scopeOwnOrganisation, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { notFound } from '../utils/errors'
import { json } from '../utils/db'

export async function listLoggerProfiles(db: Knex, actor: Actor) {
  const rows = await scopeOwnOrganisation(db('logger_profiles'), actor, 'team_id').orderBy('name')
  return rows.map((r) => ({ id: r.id, name: r.name, headerSignature: r.header_signature, mapping: json(r.mapping, {}) }))
}

/** Saves (or replaces, by name) a mapping for the actor's organisation. */
export async function saveLoggerProfile(db: Knex, actor: Actor, input: z.infer<typeof LoggerProfileSchema>) {
  const signature = headerSignature(input.header).slice(0, 500)
  return db.transaction(async (trx) => {
    const existing = await scopeOwnOrganisation(trx('logger_profiles'), actor, 'team_id').where({ name: input.name }).forUpdate().first()
    const row = { team_id: ownOrganisation(actor), name: input.name, header_signature: signature, mapping: JSON.stringify(input.mapping), created_by: actor.id, updated_at: new Date() }
    let id = existing?.id
    if (existing) await trx('logger_profiles').where('id', existing.id).update(row)
    else [id] = await trx('logger_profiles').insert(row)
    await audit(trx, actor, { entity: 'logger_profile', entityId: id, action: existing ? 'update' : 'create', after: { name: input.name, signature } })
    return { id, name: input.name, headerSignature: signature, mapping: input.mapping }
  })
}

export async function deleteLoggerProfile(db: Knex, actor: Actor, id: number) {
  return db.transaction(async (trx) => {
    const row = await scopeOwnOrganisation(trx('logger_profiles'), actor, 'team_id').where({ id }).first()
    if (!row) notFound('Logger profile')
    await trx('logger_profiles').where('id', id).delete()
    await audit(trx, actor, { entity: 'logger_profile', entityId: id, action: 'delete', before: { name: row.name } })
    return { ok: true }
  })
}
