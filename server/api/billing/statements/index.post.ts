import { BILLING_WRITERS, GenerateStatementSchema } from '#shared/schemas/billing'
import { generateStatement } from '../../../services/billing/statements'

// Computes (or recomputes) the draft statement of a team for a closed month or event.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const input = await readValidBody(event, GenerateStatementSchema)
  const result = await callInTransaction(generateStatement, actor, input)
  setResponseStatus(event, 201)
  return result
})
