// Engines allocated to a team's coming events: read the plan's data, solve it with HiGHS, accept a
// plan into the event plans (refused while it breaks a rule), keep entries and workshop weeks.
import type { Knex } from 'knex'
import type { z } from 'zod'
import { checkPlan, rebuildWeek, solveAllocation } from '#shared/domain/allocation'
import type { AllocationAcceptSchema, EventEntriesSchema, WorkshopWeekSchema } from '#shared/schemas/allocation'
import type { AllocationDto, AllocationSolveDto } from '#shared/types/allocation'
import type { Actor } from '../../utils/guard'
import { canReadCatalogue, canWriteCatalogue, catalogueOwner } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest, conflict, notFound } from '../../utils/errors'
import { solveLp } from '../../utils/highs'
import { bumpLifeRevision } from '../fleet-data'
import { currentPlan, loadInput, resolveTeam, teamsFor } from './data'

export async function loadAllocation(db: Knex, actor: Actor, teamId: number | undefined, now = new Date()): Promise<AllocationDto> {
  const team = await resolveTeam(db, actor, teamId)
  const { input, events, weeks, excluded } = await loadInput(db, team, now)
  const current = await currentPlan(db, team, input)
  return {
    team: { id: team.id, name: team.name },
    teams: await teamsFor(db, actor),
    events,
    input,
    weeks,
    excluded,
    current,
    currentCheck: checkPlan(input, current),
  }
}

/** The solver's proposal (nothing written), checked and explained; or the constraints it cannot meet. */
export async function proposeAllocation(db: Knex, actor: Actor, teamId: number | undefined, now = new Date()): Promise<AllocationSolveDto> {
  const team = await resolveTeam(db, actor, teamId)
  const { input } = await loadInput(db, team, now)
  if (!input.entries.length) badRequest('Invalid input: entries: enter the cars for at least one coming event first')
  const outcome = await solveAllocation(input, (lp) => solveLp(lp))
  return { outcome, check: outcome.status === 'optimal' || outcome.status === 'feasible' ? checkPlan(input, outcome.plan) : null }
}

/**
 * Writes a plan into the event plans of the events it covers and books its rebuilds with the
 * workshop. The plan is checked again on the data as it is now; any violation refuses it (409).
 */
export async function acceptAllocation(db: Knex, actor: Actor, body: z.infer<typeof AllocationAcceptSchema>, now = new Date()) {
  const team = await resolveTeam(db, actor, body.teamId)
  return db.transaction(async (trx) => {
    // One acceptance at a time per supplier: the workshop's weeks are shared by its teams.
    await trx('organisations').where('id', team.supplierId).forUpdate().first('id')
    const { input } = await loadInput(trx, team, now, db)
    const entryIds = new Set(input.entries.map((e) => e.id))
    const unknown = body.assignments.find((a) => !entryIds.has(a.entryId))
    if (unknown) notFound('Entry')
    const check = checkPlan(input, body)
    if (check.violations.length) conflict(`The plan cannot be accepted: ${check.violations[0]!.message}`, { violations: check.violations })
    const eventIds = input.events.map((e) => e.id)
    if (!eventIds.length) badRequest('Invalid input: assignments: no coming event has entries to plan')
    const before = await trx('event_plans').where('team_id', team.id).whereIn('event_id', eventIds)
    await trx('event_plans').where('team_id', team.id).whereIn('event_id', eventIds).delete()
    const entryById = new Map(input.entries.map((e) => [e.id, e]))
    const rows = body.assignments.map((a) => {
      const entry = entryById.get(a.entryId)!
      return { event_id: entry.eventId, engine_id: a.engineId, team_id: team.id, chassis: entry.chassis, planned_seconds: entry.plannedSeconds, planned_km: null }
    })
    if (rows.length) await trx('event_plans').insert(rows)
    await trx('planned_rebuilds').where('team_id', team.id).whereIn('before_event_id', eventIds).delete()
    const eventById = new Map(input.events.map((e) => [e.id, e]))
    if (check.rebuilds.length) {
      await trx('planned_rebuilds').insert(
        check.rebuilds.map((r) => ({ supplier_id: team.supplierId, team_id: team.id, engine_id: r.engineId, before_event_id: r.beforeEventId, week_start: rebuildWeek(eventById.get(r.beforeEventId)!) })),
      )
    }
    await audit(trx, actor, {
      entity: 'allocation',
      entityId: team.id,
      action: 'accept',
      before: before.map((p: any) => ({ eventId: p.event_id, engineId: p.engine_id, chassis: p.chassis })),
      after: { assignments: rows.map((r) => ({ eventId: r.event_id, engineId: r.engine_id, chassis: r.chassis })), rebuilds: check.rebuilds.map((r) => ({ engineId: r.engineId, beforeEventId: r.beforeEventId, weekStart: r.weekStart })) },
    })
    await bumpLifeRevision(trx)
    return { accepted: rows.length, rebuilds: check.rebuilds.length }
  })
}

/** Replaces the team's entries for one coming event. */
export async function saveEventEntries(db: Knex, actor: Actor, body: z.infer<typeof EventEntriesSchema>, now = new Date()) {
  const team = await resolveTeam(db, actor, body.teamId)
  return db.transaction(async (trx) => {
    // An event of the team's supplier's calendar, and one the actor may read.
    const ev = await trx('events').where({ id: body.eventId, supplier_id: team.supplierId }).first()
    if (!ev || !canReadCatalogue(actor, ev.supplier_id)) notFound('Event')
    if (new Date(ev.starts_at) <= now) conflict(`${ev.name} has started; entries are for coming events`)
    const before = await trx('event_entries').where({ event_id: ev.id, team_id: team.id }).select('chassis', 'planned_seconds')
    await trx('event_entries').where({ event_id: ev.id, team_id: team.id }).delete()
    if (body.entries.length) await trx('event_entries').insert(body.entries.map((e) => ({ event_id: ev.id, team_id: team.id, chassis: e.chassis, planned_seconds: e.plannedSeconds })))
    await audit(trx, actor, { entity: 'event_entries', entityId: `${ev.id}:${team.id}`, action: 'replace', before, after: body.entries })
    return { eventId: ev.id, entries: body.entries.length }
  })
}

/** Sets the workshop's rebuilds for one week (the supplier's own workshop). */
export async function setWorkshopWeek(db: Knex, actor: Actor, body: z.infer<typeof WorkshopWeekSchema>) {
  const supplierId = catalogueOwner(actor)
  if (supplierId === null || !canWriteCatalogue(actor, supplierId)) notFound('Workshop')
  return db.transaction(async (trx) => {
    const before = await trx('workshop_weeks').where({ supplier_id: supplierId, week_start: body.weekStart }).first()
    if (before) await trx('workshop_weeks').where('id', before.id).update({ rebuilds: body.rebuilds })
    else await trx('workshop_weeks').insert({ supplier_id: supplierId, week_start: body.weekStart, rebuilds: body.rebuilds })
    await audit(trx, actor, { entity: 'workshop_week', entityId: `${supplierId}:${body.weekStart}`, action: before ? 'update' : 'create', before: before ? { rebuilds: before.rebuilds } : undefined, after: body })
    return { weekStart: body.weekStart, rebuilds: body.rebuilds }
  })
}
