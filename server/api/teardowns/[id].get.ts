import { FLEET_READERS } from '#shared/roles'
import { teardownDetail } from '../../services/teardowns/sheet'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(teardownDetail, actor, id)
})
