import { FLEET_READERS } from '#shared/roles'
import { oilReport } from '../../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const report = await callService(oilReport, actor, id)
  setResponseHeaders(event, {
    'content-type': 'application/pdf',
    'content-length': report.data.length,
    'content-disposition': `attachment; filename="${report.name.replace(/[^\w.\- ]+/g, '_')}"`,
    'x-content-type-options': 'nosniff',
    'cache-control': 'private, no-store',
  })
  return report.data
})
