import { reprocessSession } from '../../../services/logger-import'

// Re-reads the stored logger file with the engine type's current bands (after a band change).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'team_manager', 'race_engineer'])
  const { id } = readValidParams(event, IdParams)
  return callService(reprocessSession, actor, id, Number(useRuntimeConfig().loggerMaxBytes))
})
