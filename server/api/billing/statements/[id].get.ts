import { STATEMENT_READERS } from '#shared/schemas/billing'
import { getStatement } from '../../../services/billing/statements'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, STATEMENT_READERS)
  const { id } = readValidParams(event, IdParams)
  return callService(getStatement, actor, id)
})
