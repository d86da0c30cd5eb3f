import { FLEET_READERS } from '#shared/roles'
import { listComponentTypes } from '../../services/component-types'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return callService(listComponentTypes, actor)
})
