import { BILLING_WRITERS } from '#shared/schemas/billing'
import { issueWithInvoice } from '../../../../services/billing/invoices'

// Issues a reviewed statement and sends its invoice; "queued" when the payment service is down.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const { id } = readValidParams(event, IdParams)
  return callService(issueWithInvoice, actor, id)
})
