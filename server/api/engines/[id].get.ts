import { FLEET_READERS } from '#shared/roles'
import { visibleEngine } from '../../services/fleet-scope'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return visibleEngine(useDb(), actor, id)
})
