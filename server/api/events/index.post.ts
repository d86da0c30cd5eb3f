import { SUPPLIER_ROLES } from '#shared/roles'
import { EventCreateSchema } from '#shared/schemas/fleet'
import { createEvent } from '../../services/events'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const input = await readValidBody(event, EventCreateSchema)
  const created = await callService(createEvent, actor, input)
  setResponseStatus(event, 201)
  return created
})
