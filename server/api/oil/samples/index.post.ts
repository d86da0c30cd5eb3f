import { SESSION_WRITERS } from '#shared/roles'
import { OilSampleCreateSchema } from '#shared/schemas/oil'
import { createOilSample } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { engineId, lab, ...sample } = await readValidBody(event, OilSampleCreateSchema)
  const created = await callService(createOilSample, actor, engineId, lab ?? null, sample)
  setResponseStatus(event, 201)
  return created
})
