import { SUPPLIER_ROLES } from '#shared/roles'
import { ComponentTypeLimitSaveSchema } from '#shared/schemas/limit-preview'
import { saveComponentTypeLimits } from '../../../services/limit-preview'

// Saves a previewed limit change; 409 when the fleet data moved since the preview.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, ComponentTypeLimitSaveSchema)
  return callService(saveComponentTypeLimits, actor, id, input)
})
