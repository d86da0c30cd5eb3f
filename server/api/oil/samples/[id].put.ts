import { SESSION_WRITERS } from '#shared/roles'
import { OilSampleUpdateSchema } from '#shared/schemas/oil'
import { updateOilSample } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, IdParams)
  const { lab, baseVersion, ...sample } = await readValidBody(event, OilSampleUpdateSchema)
  return callService(updateOilSample, actor, id, lab ?? null, sample, new Date(), { baseVersion })
})
