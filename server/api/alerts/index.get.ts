import { ANY_ROLE } from '#shared/roles'
import { AlertListQuery } from '#shared/schemas/alerts'
import { listAlerts } from '../../services/alerts'

// Every role sees the alerts of what it may see; another team's alerts are simply absent.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const query = readValidQuery(event, AlertListQuery)
  return callService(listAlerts, actor, query)
})
