import { SESSION_WRITERS } from '#shared/roles'
import { OilMappingSaveSchema } from '#shared/schemas/oil'
import { saveOilMapping } from '../../../services/oil-lab'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const input = await readValidBody(event, OilMappingSaveSchema)
  return callService(saveOilMapping, actor, input)
})
