import { z } from 'zod'
import { outboxView } from '../../services/alerts'

const Query = z.object({
  state: z.enum(['pending', 'sent', 'failed']).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(100),
})

export default defineEventHandler(async (event) => {
  await requireActor(event, ['admin'])
  return callService(outboxView, readValidQuery(event, Query))
})
