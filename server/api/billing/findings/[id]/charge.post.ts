import { BILLING_WRITERS, FindingChargeSchema } from '#shared/schemas/billing'
import { chargeFinding } from '../../../../services/billing/contracts'

// The supplier marks a teardown finding as the team's doing; the contract's damage rule prices it.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, FindingChargeSchema)
  return callInTransaction(chargeFinding, actor, id, input)
})
