import { z } from 'zod'
import { PlanSchema } from '#shared/schemas/fleet'
import { bumpLifeRevision } from '../../../../services/fleet-data'
import { engineRowFor } from '../../../../services/fleet-scope'

const Params = z.object({ id: z.coerce.number().int().positive(), engineId: z.coerce.number().int().positive() })

// Assign an engine to a car for an event; the forecast then uses this plan.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'team_manager'])
  const { id, engineId } = readValidParams(event, Params)
  const input = await readValidBody(event, PlanSchema)
  return useDb().transaction(async (trx) => {
    const engine = await engineRowFor(trx, actor, engineId, { forUpdate: true })
    const ev = await trx('events').where('id', id).first()
    if (!ev || (actor.role !== 'admin' && ev.supplier_id !== actor.supplierId)) notFound('Event')
    const type = await trx('engine_types').where('id', engine.engine_type_id).first()
    if (type.series !== ev.series) badRequest(`Invalid input: engineId: ${engine.serial} is a ${type.code} for the ${type.series}; this event belongs to the ${ev.series}`)
    if (engine.status !== 'active') conflict(`${engine.serial} is in ${engine.status} and cannot be assigned until it is rebuilt and signed off`)
    if (!engine.team_id) conflict(`${engine.serial} is not leased to a team`)
    if (new Date(ev.ends_at) < new Date()) conflict(`${ev.name} is over; assignments are for coming events`)
    const before = await trx('event_plans').where({ event_id: id, engine_id: engineId }).first()
    const row = { event_id: id, engine_id: engineId, team_id: engine.team_id, chassis: input.chassis, planned_seconds: input.plannedSeconds, planned_km: input.plannedKm }
    if (before) await trx('event_plans').where('id', before.id).update(row)
    else await trx('event_plans').insert(row)
    await audit(trx, actor, { entity: 'event_plan', entityId: `${id}:${engineId}`, action: before ? 'update' : 'assign', before: before ?? undefined, after: row })
    await bumpLifeRevision(trx)
    return { eventId: id, engineId, chassis: input.chassis, plannedSeconds: input.plannedSeconds, plannedKm: input.plannedKm }
  })
})
