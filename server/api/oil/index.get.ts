import { FLEET_READERS } from '#shared/roles'
import { oilList } from '../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return callService(oilList, actor)
})
