import { FLEET_READERS } from '#shared/roles'
import { listEvents } from '../../services/events'

// The supplier's calendar, read by its teams; plans are shown only for engines the actor may see.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return callService(listEvents, actor)
})
