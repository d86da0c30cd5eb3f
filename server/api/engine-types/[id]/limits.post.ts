import { SUPPLIER_ROLES } from '#shared/roles'
import { EngineTypeLimitSaveSchema } from '#shared/schemas/limit-preview'
import { saveEngineTypeLimits } from '../../../services/limit-preview'

// Saves a previewed change of bands or reference rpm; 409 when the fleet data moved since the preview.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, EngineTypeLimitSaveSchema)
  return callService(saveEngineTypeLimits, actor, id, input)
})
