import { AllocationQuerySchema } from '#shared/schemas/allocation'
import { ALLOCATION_READERS } from '#shared/roles'
import { loadAllocation } from '../../services/allocation'

// A team's coming entries, its engines' hours to the warning level, the workshop's weeks and the plan as it stands.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ALLOCATION_READERS)
  const { teamId } = readValidQuery(event, AllocationQuerySchema)
  return callService(loadAllocation, actor, teamId)
})
