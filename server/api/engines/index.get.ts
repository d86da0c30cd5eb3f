import { FLEET_READERS } from '#shared/roles'
import { visibleFleet } from '../../services/fleet-scope'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { engines } = await visibleFleet(useDb(), actor)
  return engines.map(({ parts: _parts, emptyPositions: _empty, ...summary }) => summary)
})
