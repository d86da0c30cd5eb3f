import { FLEET_READERS } from '#shared/roles'
import { partWear } from '../../../services/teardowns/wear'

// Wear per characteristic across this part's teardowns: rate per running hour and hours left to the limit.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(partWear, actor, id)
})
