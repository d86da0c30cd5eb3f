import { z } from 'zod'
import { SUPPLIER_ROLES } from '#shared/roles'
import { FailureModeSchema } from '#shared/schemas/teardown'
import { classifyFinding } from '../../../services/evidence'

const Params = z.object({ id: z.coerce.number().int().positive() })

// The supplier engineer's classification of a teardown finding as a failure mode (or as none).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, Params)
  const input = await readValidBody(event, FailureModeSchema)
  return callInTransaction(classifyFinding, actor, id, input)
})
