import { SESSION_WRITERS } from '#shared/roles'
import { json } from '../../utils/db'

// Saved column mappings of the actor's team (the supplier keeps its own for bench files).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const rows = await useDb()('logger_profiles').where('team_id', actor.organisationId).orderBy('name')
  return rows.map((r) => ({ id: r.id, name: r.name, headerSignature: r.header_signature, mapping: json(r.mapping, {}) }))
})
