import { SUPPLIER_ROLES } from '#shared/roles'
import { ComponentTypeLimitChangeSchema } from '#shared/schemas/limit-preview'
import { previewComponentTypeLimits } from '../../../services/limit-preview'

// What a change of this part type's limits would do to the fleet; nothing is written.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const change = await readValidBody(event, ComponentTypeLimitChangeSchema)
  return callService(previewComponentTypeLimits, actor, id, change)
})
