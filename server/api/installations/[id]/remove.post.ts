import { RemoveSchema } from '#shared/schemas/fleet'
import { removePart } from '../../../services/builds'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'mechanic'])
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, RemoveSchema)
  return callInTransaction(removePart, actor, id, input)
})
