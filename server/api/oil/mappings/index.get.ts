import { SESSION_WRITERS } from '#shared/roles'
import { oilMappings } from '../../../services/oil-lab'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  return callService(oilMappings, actor)
})
