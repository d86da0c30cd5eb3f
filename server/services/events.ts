// The supplier's calendar and the teams' plans of which engine runs which event.
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { EventCreateSchema, PlanSchema } from '#shared/schemas/fleet'
import type { EventDto } from '#shared/types/fleet'
import { canReadCatalogue, catalogueOwner, scopeCatalogue, scopeQuery, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { bumpLifeRevision, toEventDto } from './fleet-data'
import { engineRowFor } from './engine-rows'

/** The supplier's calendar, read by its teams; plans are shown only for engines the actor may see. */
export async function listEvents(db: Knex, actor: Actor): Promise<EventDto[]> {
  const rows = await scopeCatalogue(db('events').orderBy('starts_at'), actor)
  const plansQ = db('event_plans as p').join('engines as e', 'e.id', 'p.engine_id').select('p.*', 'e.serial as engine_serial').whereIn('p.event_id', rows.map((r) => r.id))
  const plans = await scopeQuery(plansQ, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })
  return rows.map((r) => toEventDto(r, plans))
}

export async function createEvent(db: Knex, actor: Actor, input: z.infer<typeof EventCreateSchema>): Promise<EventDto> {
  return db.transaction(async (trx) => {
    const [id] = await trx('events').insert({
      supplier_id: catalogueOwner(actor),
      name: input.name,
      series: input.series,
      track: input.track,
      track_length_km: input.trackLengthKm,
      starts_at: new Date(input.startsAt),
      ends_at: new Date(input.endsAt),
      planned_seconds: input.plannedSeconds,
      planned_km: input.plannedKm,
    })
    await audit(trx, actor, { entity: 'event', entityId: id!, action: 'create', after: input })
    await bumpLifeRevision(trx)
    return toEventDto(await trx('events').where('id', id).first())
  })
}

/** Assign an engine to a car for an event; the forecast then uses this plan. */
export async function assignEngine(db: Knex, actor: Actor, eventId: number, engineId: number, input: z.infer<typeof PlanSchema>) {
  return db.transaction(async (trx) => {
    const engine = await engineRowFor(trx, actor, engineId, { forUpdate: true })
    const ev = await trx('events').where('id', eventId).first()
    if (!ev || !canReadCatalogue(actor, ev.supplier_id)) notFound('Event')
    const type = await trx('engine_types').where('id', engine.engine_type_id).first()
    if (type.series !== ev.series) badRequest(`Invalid input: engineId: ${engine.serial} is a ${type.code} for the ${type.series}; this event belongs to the ${ev.series}`)
    if (engine.status !== 'active') conflict(`${engine.serial} is in ${engine.status} and cannot be assigned until it is rebuilt and signed off`)
    if (!engine.team_id) conflict(`${engine.serial} is not leased to a team`)
    if (new Date(ev.ends_at) < new Date()) conflict(`${ev.name} is over; assignments are for coming events`)
    const before = await trx('event_plans').where({ event_id: eventId, engine_id: engineId }).first()
    const row = { event_id: eventId, engine_id: engineId, team_id: engine.team_id, chassis: input.chassis, planned_seconds: input.plannedSeconds, planned_km: input.plannedKm }
    if (before) await trx('event_plans').where('id', before.id).update(row)
    else await trx('event_plans').insert(row)
    await audit(trx, actor, { entity: 'event_plan', entityId: `${eventId}:${engineId}`, action: before ? 'update' : 'assign', before: before ?? undefined, after: row })
    await bumpLifeRevision(trx)
    return { eventId, engineId, chassis: input.chassis, plannedSeconds: input.plannedSeconds, plannedKm: input.plannedKm }
  })
}

export async function unassignEngine(db: Knex, actor: Actor, eventId: number, engineId: number) {
  return db.transaction(async (trx) => {
    await engineRowFor(trx, actor, engineId)
    const before = await trx('event_plans').where({ event_id: eventId, engine_id: engineId }).first()
    if (!before) notFound('Assignment')
    await trx('event_plans').where('id', before.id).delete()
    await audit(trx, actor, { entity: 'event_plan', entityId: `${eventId}:${engineId}`, action: 'unassign', before })
    await bumpLifeRevision(trx)
    return { ok: true }
  })
}
