import { FLEET_READERS } from '#shared/roles'
import { engineRowFor } from '../../../services/fleet-scope'
import { engineCharts } from '../../../services/part-history'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const db = useDb()
  await engineRowFor(db, actor, id)
  return engineCharts(db, id)
})
