import { ANY_ROLE } from '#shared/roles'
import { EngineAlertsAckSchema, EngineIdParams } from '#shared/schemas/alerts'
import { acknowledgeEngineAlerts } from '../../../../services/alerts'

// Acknowledge-all for one engine: every role that may acknowledge one alert may acknowledge its engine's.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const { engineId } = readValidParams(event, EngineIdParams)
  const input = await readValidBody(event, EngineAlertsAckSchema)
  return callService(acknowledgeEngineAlerts, actor, engineId, input)
})
