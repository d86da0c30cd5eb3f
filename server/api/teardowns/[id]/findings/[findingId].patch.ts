import { z } from 'zod'
import { FindingUpdateSchema, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { updateFinding } from '../../../../services/teardowns/findings'

const Params = z.object({ id: z.coerce.number().int().positive(), findingId: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id, findingId } = readValidParams(event, Params)
  const input = await readValidBody(event, FindingUpdateSchema)
  return callInTransaction(updateFinding, actor, id, findingId, input)
})
