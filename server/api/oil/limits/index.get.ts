import { FLEET_READERS } from '#shared/roles'
import { oilLimitsList } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return callService(oilLimitsList, actor)
})
