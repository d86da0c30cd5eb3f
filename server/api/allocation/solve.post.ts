import { AllocationSolveSchema } from '#shared/schemas/allocation'
import { ALLOCATION_PLANNERS } from '#shared/roles'
import { proposeAllocation } from '../../services/allocation'

// The solver's proposal for the team's entries; nothing is written.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ALLOCATION_PLANNERS)
  const { teamId } = await readValidBody(event, AllocationSolveSchema)
  return callService(proposeAllocation, actor, teamId)
})
