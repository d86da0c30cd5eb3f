import { SESSION_VOIDERS } from '#shared/roles'
import { RestoreSessionSchema } from '#shared/schemas/sessions'
import { restoreSession } from '../../../services/session-void'

// Brings a voided session back: it counts again from its own date.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_VOIDERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, RestoreSessionSchema)
  return callService(restoreSession, actor, id, input)
})
