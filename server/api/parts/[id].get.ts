import { FLEET_READERS } from '#shared/roles'
import { partHistory } from '../../services/part-history'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(partHistory, actor, id)
})
