import { ANY_ROLE } from '#shared/roles'
import { alertPrefsOf } from '../../services/alerts'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  return callService(alertPrefsOf, actor)
})
