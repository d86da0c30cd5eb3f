import { z } from 'zod'
import { SUPPLIER_ROLES } from '#shared/roles'
import { EvidenceQuerySchema } from '#shared/schemas/teardown'
import { partTypeEvidence } from '../../../services/evidence'

const Params = z.object({ id: z.coerce.number().int().positive() })

// Field lives of a part type with the Weibull analysis per failure mode: the supplier's evidence.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, Params)
  const query = readValidQuery(event, EvidenceQuerySchema)
  return callService(partTypeEvidence, actor, id, query)
})
