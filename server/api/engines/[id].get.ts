import { FLEET_READERS } from '#shared/roles'
import { engineDetail } from '../../services/engines'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(engineDetail, actor, id)
})
