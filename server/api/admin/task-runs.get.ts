import { z } from 'zod'
import { recentTaskRuns } from '../../services/alerts'

const Query = z.object({ limit: z.coerce.number().int().min(1).max(500).default(50) })

export default defineEventHandler(async (event) => {
  await requireActor(event, ['admin'])
  const { limit } = readValidQuery(event, Query)
  return callService(recentTaskRuns, limit)
})
