import { BILLING_WRITERS, BillingContactSchema } from '#shared/schemas/billing'
import { setBillingContact } from '../../../services/billing/contracts'

// The billing contact and address of a team (or of the supplier, for the invoice header).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, BillingContactSchema)
  return callInTransaction(setBillingContact, actor, id, input)
})
