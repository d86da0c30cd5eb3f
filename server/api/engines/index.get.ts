import { FLEET_READERS } from '#shared/roles'
import { listEngines } from '../../services/engines'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return callService(listEngines, actor)
})
