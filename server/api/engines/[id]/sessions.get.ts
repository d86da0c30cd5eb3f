import { z } from 'zod'
import { FLEET_READERS } from '#shared/roles'
import { engineSessions } from '../../../services/engines'

const EngineSessionsQuery = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(20),
  sort: z.enum(['startedAt', 'runningSeconds', 'kind', 'distanceKm']).default('startedAt'),
  dir: z.enum(['asc', 'desc']).default('desc'),
})

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const q = readValidQuery(event, EngineSessionsQuery)
  return callService(engineSessions, actor, id, q)
})
