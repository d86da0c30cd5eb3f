import { SESSION_WRITERS } from '#shared/roles'
import { LoggerProfileSchema } from '#shared/schemas/import'
import { saveLoggerProfile } from '../../services/logger-profiles'

// Saves (or replaces, by name) a mapping for the actor's team.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const input = await readValidBody(event, LoggerProfileSchema)
  return callService(saveLoggerProfile, actor, input)
})
