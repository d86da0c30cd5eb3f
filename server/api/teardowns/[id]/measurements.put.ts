import { MeasurementSchema, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { recordMeasurement } from '../../../services/teardowns/sheet'

// One reading, recorded or corrected (one row per part and characteristic).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, MeasurementSchema)
  return callInTransaction(recordMeasurement, actor, id, input)
})
