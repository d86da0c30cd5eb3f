import { SESSION_WRITERS } from '#shared/roles'
import { OilImportSchema } from '#shared/schemas/oil'
import { importOilCsv } from '../../services/oil-lab'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const input = await readValidBody(event, OilImportSchema)
  const result = await callService(importOilCsv, actor, input)
  setResponseStatus(event, 201)
  return result
})
