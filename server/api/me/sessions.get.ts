import { ANY_ROLE } from '#shared/roles'
import type { MySessionsDto } from '#shared/types/actor'
import { mySessions } from '../../services/account'

// The signed-in user's own live sessions (browsers and devices), newest first; ids are never shown.
export default defineEventHandler(async (event): Promise<MySessionsDto> => {
  const actor = await requireActor(event, ANY_ROLE)
  return callService(mySessions, actor, event.context.sessionId)
})
