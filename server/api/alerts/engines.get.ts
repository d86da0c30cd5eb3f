import { ANY_ROLE } from '#shared/roles'
import { AlertListQuery } from '#shared/schemas/alerts'
import { listAlertsByEngine } from '../../services/alerts'

// The alerts page: the same alerts as /api/alerts, grouped by engine, most severe and newest first.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const query = readValidQuery(event, AlertListQuery)
  return callService(listAlertsByEngine, actor, query)
})
