import { SwapSchema, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { swapPart } from '../../../services/teardowns'

// Remove the part at a position (to the shelf, quarantine or scrap by its finding) and fit another by serial.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, SwapSchema)
  const db = useDb()
  const result = await db.transaction((trx) => swapPart(db, trx, actor, id, input))
  setResponseStatus(event, 201)
  return result
})
