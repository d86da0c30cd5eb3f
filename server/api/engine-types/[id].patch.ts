import { SUPPLIER_ROLES } from '#shared/roles'
import { EngineTypeUpdateSchema } from '#shared/schemas/fleet'
import { updateEngineType } from '../../services/engine-types'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, EngineTypeUpdateSchema)
  return callService(updateEngineType, actor, id, input)
})
