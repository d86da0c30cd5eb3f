import { SUPPLIER_ROLES } from '#shared/roles'
import { EngineTypeLimitChangeSchema } from '#shared/schemas/limit-preview'
import { previewEngineTypeLimits } from '../../../services/limit-preview'

// What a change of this engine type's over-rev bands or reference rpm would do to the fleet; nothing is written.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const change = await readValidBody(event, EngineTypeLimitChangeSchema)
  return callService(previewEngineTypeLimits, actor, id, change)
})
