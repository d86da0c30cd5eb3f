import { SESSION_WRITERS } from '#shared/roles'
import { listLoggerProfiles } from '../../services/logger-profiles'

// Saved column mappings of the actor's team (the supplier keeps its own for bench files).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  return callService(listLoggerProfiles, actor)
})
