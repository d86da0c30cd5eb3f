import { BILLING_WRITERS } from '#shared/schemas/billing'
import { reviewStatement } from '../../../../services/billing/statements'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const { id } = readValidParams(event, IdParams)
  return callInTransaction(reviewStatement, actor, id)
})
