import { SUPPLIER_ROLES } from '#shared/roles'
import { EngineTypeCreateSchema } from '#shared/schemas/fleet'
import { createEngineType } from '../../services/engine-types'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const input = await readValidBody(event, EngineTypeCreateSchema)
  const created = await callService(createEngineType, actor, input)
  setResponseStatus(event, 201)
  return created
})
