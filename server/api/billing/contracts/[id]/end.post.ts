import { BILLING_WRITERS, EndContractSchema } from '#shared/schemas/billing'
import { endContract } from '../../../../services/billing/contracts'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, EndContractSchema)
  return callInTransaction(endContract, actor, id, input)
})
