import { FLEET_READERS } from '#shared/roles'
import { toEventDto } from '../../services/fleet-data'

// The supplier's calendar, read by its teams; plans are shown only for engines the actor may see.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const db = useDb()
  const eventsQ = db('events').orderBy('starts_at')
  if (actor.role !== 'admin') eventsQ.where('supplier_id', actor.supplierId)
  const rows = await eventsQ
  const plansQ = db('event_plans as p').join('engines as e', 'e.id', 'p.engine_id').select('p.*', 'e.serial as engine_serial').whereIn('p.event_id', rows.map((r) => r.id))
  scopeQuery(plansQ, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })
  const plans = await plansQ
  return rows.map((r) => toEventDto(r, plans))
})
