import { FindingSchema, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { addFinding } from '../../../services/teardowns/findings'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, FindingSchema)
  const result = await callInTransaction(addFinding, actor, id, input)
  setResponseStatus(event, 201)
  return result
})
