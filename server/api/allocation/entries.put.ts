import { EventEntriesSchema } from '#shared/schemas/allocation'
import { ALLOCATION_PLANNERS } from '#shared/roles'
import { saveEventEntries } from '../../services/allocation'

// The team's cars entered in one coming event, with each car's planned running.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ALLOCATION_PLANNERS)
  const body = await readValidBody(event, EventEntriesSchema)
  return callService(saveEventEntries, actor, body)
})
