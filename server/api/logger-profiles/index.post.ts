import { SESSION_WRITERS } from '#shared/roles'
import { headerSignature } from '#shared/domain/logger-mapping'
import { LoggerProfileSchema } from '#shared/schemas/import'

// Saves (or replaces, by name) a mapping for the actor's team.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const input = await readValidBody(event, LoggerProfileSchema)
  const signature = headerSignature(input.header).slice(0, 500)
  return useDb().transaction(async (trx) => {
    const existing = await trx('logger_profiles').where({ team_id: actor.organisationId, name: input.name }).forUpdate().first()
    const row = { team_id: actor.organisationId, name: input.name, header_signature: signature, mapping: JSON.stringify(input.mapping), created_by: actor.id, updated_at: new Date() }
    let id = existing?.id
    if (existing) await trx('logger_profiles').where('id', existing.id).update(row)
    else [id] = await trx('logger_profiles').insert(row)
    await audit(trx, actor, { entity: 'logger_profile', entityId: id, action: existing ? 'update' : 'create', after: { name: input.name, signature } })
    return { id, name: input.name, headerSignature: signature, mapping: input.mapping }
  })
})
