import { FLEET_READERS } from '#shared/roles'
import { loadComponentTypes } from '../../services/fleet-data'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return loadComponentTypes(useDb(), (qb) => {
    if (actor.role !== 'admin') qb.where('supplier_id', actor.supplierId)
  })
})
