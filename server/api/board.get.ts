import { z } from 'zod'
import { line } from '#shared/text'
import { FLEET_READERS } from '#shared/roles'
import { boardAnswer } from '../services/board'

const BoardQuery = z.object({
  team: z.coerce.number().int().positive().optional(),
  type: z.coerce.number().int().positive().optional(),
  status: z.enum(['ok', 'warning', 'due', 'over']).optional(),
  location: z.enum(['car', 'shelf', 'supplier', 'teardown']).optional(),
  q: line().trim().max(60).optional(),
  sort: z.enum(['consumed', 'due', 'serial']).default('consumed'),
})

// The fleet life board: one summary per visible engine, filtered and sorted on the server.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const q = readValidQuery(event, BoardQuery)
  return sendPreparedJson(event, await callService(boardAnswer, actor, q))
})
