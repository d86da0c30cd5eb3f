import { FLEET_READERS } from '#shared/roles'
import { teardownDetail } from '../../services/teardowns'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return teardownDetail(useDb(), actor, id)
})
