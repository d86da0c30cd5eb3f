// The supplier's calendar and the teams' plans of which engine runs which event.
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { EventCreateSchema, PlanSchema } from '#shared/schemas/fleet'
import type { EventDto, EventRunDto } from '#shared/types/fleet'
import { canReadCatalogue, catalogueOwner, scopeCatalogue, scopeQuery, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { iso, num } from '../utils/db'
import { bumpLifeRevision, toEventDto } from './fleet-data'
import { engineRowFor } from './engine-rows'

/** The supplier's calendar, read by its teams; plans are shown only for engines the actor may see. */
export async function listEvents(db: Knex, actor: Actor): Promise<EventDto[]> {
  const rows = await scopeCatalogue(db('events').orderBy('starts_at'), actor)
  const plansQ = db('event_plans as p').join('engines as e', 'e.id', 'p.engine_id').select('p.*', 'e.serial as engine_serial').whereIn('p.event_id', rows.map((r) => r.id))
  const plans = await scopeQuery(plansQ, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })
  const ran = await enginesThatRan(db, actor, rows.map((r) => r.id))
  return rows.map((r) => toEventDto(r, plans, ran.get(r.id)))
}

/** Per event, the engines the actor may see that logged sessions there, each with its sessions in order. */
async function enginesThatRan(db: Knex, actor: Actor, eventIds: number[]): Promise<Map<number, EventRunDto[]>> {
  const out = new Map<number, EventRunDto[]>()
  if (!eventIds.length) return out
  const q = db('sessions as s')
    .join('engines as e', 'e.id', 's.engine_id')
    .leftJoin('organisations as o', 'o.id', 'e.team_id')
    .whereIn('s.event_id', eventIds)
    .orderBy('e.serial')
    .orderBy('s.started_at')
    .orderBy('s.id')
    .select('s.id', 's.event_id', 's.kind', 's.started_at', 's.running_seconds', 'e.id as engine_id', 'e.serial', 'o.name as team_name')
  for (const r of await scopeQuery(q, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })) {
    let list = out.get(r.event_id)
    if (!list) out.set(r.event_id, (list = []))
    let run = list.find((x) => x.engineId === r.engine_id)
    if (!run) list.push((run = { engineId: r.engine_id, engineSerial: r.serial, teamName: r.team_name ?? null, runningSeconds: 0, sessions: [] }))
    const seconds = num(r.running_seconds)
    run.runningSeconds += seconds
    run.sessions.push({ id: r.id, kind: r.kind, startedAt: iso(r.started_at)!, runningSeconds: seconds })
  }
  return out
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
    if (engine.location === 'supplier') conflict(`${engine.serial} is at the supplier and cannot be assigned until it is back with the team`)
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
