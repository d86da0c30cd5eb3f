import { FLEET_READERS } from '#shared/roles'
import { oilSample } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(oilSample, actor, id)
})
