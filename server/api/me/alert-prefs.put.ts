import { ANY_ROLE } from '#shared/roles'
import { AlertPrefsSchema } from '#shared/schemas/alerts'
import { saveAlertPrefs } from '../../services/alerts'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const input = await readValidBody(event, AlertPrefsSchema)
  return callService(saveAlertPrefs, actor, input)
})
