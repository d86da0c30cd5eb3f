import { FLEET_READERS } from '#shared/roles'
import { engineOil } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(engineOil, actor, id)
})
