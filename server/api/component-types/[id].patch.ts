import { SUPPLIER_ROLES } from '#shared/roles'
import { ComponentTypeUpdateSchema } from '#shared/schemas/fleet'
import { updateComponentType } from '../../services/component-types'

// A limit change moves the life of every part of this type at once: life is derived at read time.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, ComponentTypeUpdateSchema)
  return callService(updateComponentType, actor, id, input)
})
