import { FLEET_READERS } from '#shared/roles'
import { sessionView } from '../../../services/sessions'

// A session with what it cost each part that was fitted when it ran.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(sessionView, actor, id)
})
