import { InstallSchema } from '#shared/schemas/fleet'
import { fitPart } from '../../../services/builds'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'mechanic'])
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, InstallSchema)
  const result = await callInTransaction(fitPart, actor, id, input)
  setResponseStatus(event, 201)
  return result
})
