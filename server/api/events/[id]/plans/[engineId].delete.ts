import { z } from 'zod'
import { unassignEngine } from '../../../../services/events'

const PlanParams = z.object({ id: z.coerce.number().int().positive(), engineId: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'team_manager'])
  const { id, engineId } = readValidParams(event, PlanParams)
  return callService(unassignEngine, actor, id, engineId)
})
