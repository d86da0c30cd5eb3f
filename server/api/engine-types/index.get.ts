import { FLEET_READERS } from '#shared/roles'
import { loadEngineTypes } from '../../services/fleet-data'

// Engine types belong to the supplier; its teams read those of their supplier.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  return loadEngineTypes(useDb(), (qb) => {
    if (actor.role !== 'admin') qb.where('supplier_id', actor.supplierId)
  })
})
