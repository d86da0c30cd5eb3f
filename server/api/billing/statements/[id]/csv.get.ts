import { toCsv } from '#shared/csv'
import { STATEMENT_READERS } from '#shared/schemas/billing'
import { statementCsvRows } from '../../../../services/billing/statements'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, STATEMENT_READERS)
  const { id } = readValidParams(event, IdParams)
  const { name, rows, columns } = await callService(statementCsvRows, actor, id)
  setResponseHeaders(event, { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${name}"` })
  return toCsv(rows, columns)
})
