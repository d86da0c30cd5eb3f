import { SESSION_WRITERS } from '#shared/roles'
import { deleteLoggerProfile } from '../../services/logger-profiles'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, IdParams)
  return callService(deleteLoggerProfile, actor, id)
})
