import { SwapSchema, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { swapPart } from '../../../services/teardowns/swaps'

// Remove the part at a position (to the shelf, quarantine or scrap by its finding) and fit another by serial.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, SwapSchema)
  const result = await callInTransaction(swapPart, actor, id, input)
  setResponseStatus(event, 201)
  return result
})
