import { SUPPLIER_ROLES } from '#shared/roles'
import type { OilLimits } from '#shared/domain/oil/limits'
import { OilLimitsSchema } from '#shared/schemas/oil'
import { saveOilLimits } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const limits = await readValidBody(event, OilLimitsSchema)
  return callService(saveOilLimits, actor, id, limits as OilLimits)
})
