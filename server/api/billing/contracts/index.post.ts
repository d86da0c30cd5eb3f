import { BILLING_WRITERS, ContractSchema } from '#shared/schemas/billing'
import { createContract } from '../../../services/billing/contracts'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const input = await readValidBody(event, ContractSchema)
  const result = await callInTransaction(createContract, actor, input)
  setResponseStatus(event, 201)
  return result
})
