import { FLEET_READERS } from '#shared/roles'
import { partHistoryCsv } from '../../../services/exports'

// The part's back-to-birth history as CSV (formula-safe, see shared/csv.ts), downloaded as a file.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  return csvAnswer(event, await callService(partHistoryCsv, actor, id))
})
