import { AllocationAcceptSchema } from '#shared/schemas/allocation'
import { ALLOCATION_PLANNERS } from '#shared/roles'
import { acceptAllocation } from '../../services/allocation'

// A plan (proposed or changed by hand) into the event plans; refused with 409 while it breaks a rule.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ALLOCATION_PLANNERS)
  const body = await readValidBody(event, AllocationAcceptSchema)
  return callService(acceptAllocation, actor, body)
})
