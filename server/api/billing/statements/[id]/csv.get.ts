import { STATEMENT_READERS } from '#shared/schemas/billing'
import { statementCsv } from '../../../../services/billing/statements'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, STATEMENT_READERS)
  const { id } = readValidParams(event, IdParams)
  const { name, csv } = await callService(statementCsv, actor, id)
  setResponseHeaders(event, { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"` })
  return csv
})
