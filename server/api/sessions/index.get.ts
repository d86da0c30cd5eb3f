import { FLEET_READERS } from '#shared/roles'
import { SessionListQuerySchema } from '#shared/schemas/sessions'
import { listSessions } from '../../services/session-list'

// Every session the actor may see, filtered and paged; voided ones only when asked for.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const q = readValidQuery(event, SessionListQuerySchema)
  return callService(listSessions, actor, q)
})
