import { z } from 'zod'
import { PlanSchema } from '#shared/schemas/fleet'
import { assignEngine } from '../../../../services/events'

const PlanParams = z.object({ id: z.coerce.number().int().positive(), engineId: z.coerce.number().int().positive() })

// Assign an engine to a car for an event; the forecast then uses this plan.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'team_manager'])
  const { id, engineId } = readValidParams(event, PlanParams)
  const input = await readValidBody(event, PlanSchema)
  return callService(assignEngine, actor, id, engineId, input)
})
