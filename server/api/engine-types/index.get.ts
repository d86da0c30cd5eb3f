import { FLEET_READERS } from '#shared/roles'
import { listEngineTypes } from '../../services/engine-types'

// Engine types belong to the supplier; its teams read those of their supplier.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return callService(listEngineTypes, actor)
})
