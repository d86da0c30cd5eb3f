import { SESSION_WRITERS } from '#shared/roles'
import { ManualSessionSchema } from '#shared/schemas/fleet'
import { createManualSession } from '../../services/sessions'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const input = await readValidBody(event, ManualSessionSchema)
  const session = await callService(createManualSession, actor, input)
  setResponseStatus(event, 201)
  return session
})
