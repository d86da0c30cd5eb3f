import { SESSION_WRITERS } from '#shared/roles'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, IdParams)
  return useDb().transaction(async (trx) => {
    const row = await trx('logger_profiles').where({ id, team_id: actor.organisationId }).first()
    if (!row) notFound('Logger profile')
    await trx('logger_profiles').where('id', id).delete()
    await audit(trx, actor, { entity: 'logger_profile', entityId: id, action: 'delete', before: { name: row.name } })
    return { ok: true }
  })
})
