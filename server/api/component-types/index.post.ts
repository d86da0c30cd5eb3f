import { SUPPLIER_ROLES } from '#shared/roles'
import { ComponentTypeCreateSchema } from '#shared/schemas/fleet'
import { createComponentType } from '../../services/component-types'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const input = await readValidBody(event, ComponentTypeCreateSchema)
  const created = await callService(createComponentType, actor, input)
  setResponseStatus(event, 201)
  return created
})
