import { SESSION_VOIDERS } from '#shared/roles'
import { VoidSessionSchema } from '#shared/schemas/sessions'
import { voidSession } from '../../../services/session-void'

// Withdraws a session filed in error: it stops counting everywhere, stays readable, and can be restored.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_VOIDERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, VoidSessionSchema)
  return callService(voidSession, actor, id, input)
})
