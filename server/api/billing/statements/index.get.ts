import { STATEMENT_READERS, StatementListQuery } from '#shared/schemas/billing'
import { listStatements } from '../../../services/billing/statements'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, STATEMENT_READERS)
  return callService(listStatements, actor, readValidQuery(event, StatementListQuery))
})
