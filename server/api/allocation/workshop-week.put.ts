import { WorkshopWeekSchema } from '#shared/schemas/allocation'
import { SUPPLIER_ROLES } from '#shared/roles'
import { setWorkshopWeek } from '../../services/allocation'

// The supplier workshop's rebuilds in one week.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const body = await readValidBody(event, WorkshopWeekSchema)
  return callService(setWorkshopWeek, actor, body)
})
