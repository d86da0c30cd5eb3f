import { z } from 'zod'
import { line } from '#shared/text'
import { FLEET_READERS } from '#shared/roles'
import { listParts } from '../../services/parts'

const PartsQuery = z.object({
  q: line().trim().max(60).optional(),
  status: z.enum(['serviceable', 'installed', 'quarantined', 'scrapped']).optional(),
  typeId: z.coerce.number().int().positive().optional(),
})

// The supplier sees all of its parts; a team sees the parts in its engines.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const q = readValidQuery(event, PartsQuery)
  return callService(listParts, actor, q)
})
