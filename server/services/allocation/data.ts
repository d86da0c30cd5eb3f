// What the allocation plans from, read for one team: its coming entries, its engines' hours to the
// warning level (from the fleet's life and each engine's recent duty), and the workshop's weeks.
import type { Knex } from 'knex'
import { eqPerRunningHour, recentDuty } from '#shared/domain/forecast'
import { headroomFresh, headroomNow, rebuildWeek, type AllocEngine, type AllocEvent, type AllocationInput, type HeadroomPart, type PlanAssignment, type ProposedPlan } from '#shared/domain/allocation'
import type { AllocationEventDto, AllocationWeekDto } from '#shared/types/allocation'
import type { Actor } from '../../utils/guard'
import { ownTeam, scopeOrganisations } from '../../utils/guard'
import { notFound } from '../../utils/errors'
import { iso } from '../../utils/db'
import { fleetLife } from '../life'
import { lifeConfig, loadComponentTypes, loadEngineTypes } from '../fleet-data'
import { loadSessionUsage } from '../session-usage'

const RECENT_SESSIONS = 10
/** Rebuilds a week when the supplier has set no figure (common practice for a small workshop). */
export const DEFAULT_WEEKLY_REBUILDS = 2
/** Hours standing in for "no limit applies" so the model keeps finite numbers. */
const NO_LIMIT_HOURS = 10_000

type Db = Knex | Knex.Transaction

export interface TeamRef {
  id: number
  name: string
  supplierId: number
}

/**
 * The team planned for: the one named (404 when the actor may not see it), else the actor's own,
 * else (a supplier or an admin) the first of its teams by name.
 */
export async function resolveTeam(db: Db, actor: Actor, teamId: number | undefined): Promise<TeamRef> {
  const id = teamId ?? ownTeam(actor) ?? (await teamsFor(db, actor))[0]?.id
  if (id === undefined) notFound('Team')
  const row = await scopeOrganisations(db('organisations').where({ id, kind: 'team' }), actor).first('id', 'name', 'supplier_id')
  if (!row) notFound('Team')
  return { id: row.id, name: row.name, supplierId: row.supplier_id }
}

export async function teamsFor(db: Db, actor: Actor) {
  const rows = await scopeOrganisations(db('organisations').where('kind', 'team').orderBy('name'), actor).select('id', 'name')
  return rows.map((r: any) => ({ id: r.id as number, name: r.name as string }))
}

function toEvent(r: any): AllocationEventDto {
  return { id: r.id, name: r.name, series: r.series, startsAt: iso(r.starts_at)!, endsAt: iso(r.ends_at)!, rebuildLeadDays: Number(r.rebuild_lead_days), plannedSeconds: r.planned_seconds ?? null }
}

/**
 * Everything the model needs, plus what the page shows beside it. The fleet's life is read through
 * `lifeDb`, the pool (its cache outlives a transaction); the rest through `db`.
 */
export async function loadInput(db: Db, team: TeamRef, now: Date, lifeDb: Knex = db as Knex) {
  const engineTypes = await loadEngineTypes(db)
  const typeById = new Map(engineTypes.map((t) => [t.id, t]))
  const engineRows = await db('engines').where('team_id', team.id).orderBy('serial')
  const series = [...new Set(engineRows.map((e: any) => typeById.get(e.engine_type_id)?.series).filter(Boolean))] as string[]
  const eventRows = series.length ? await db('events').where('supplier_id', team.supplierId).whereIn('series', series).where('starts_at', '>', now).orderBy('starts_at') : []
  const events = eventRows.map(toEvent)
  const entryRows = events.length ? await db('event_entries').where('team_id', team.id).whereIn('event_id', events.map((e) => e.id)).orderBy(['event_id', 'chassis']) : []
  const entries = entryRows.map((r: any) => ({ id: r.id as number, eventId: r.event_id as number, chassis: r.chassis as string, plannedSeconds: Number(r.planned_seconds) }))
  const entered = events.filter((e) => entries.some((x) => x.eventId === e.id))
  const allocEvents: AllocEvent[] = entered.map((e) => ({ id: e.id, name: e.name, startsAt: e.startsAt, endsAt: e.endsAt, rebuildLeadDays: e.rebuildLeadDays }))

  const { engines, excluded } = await engineHeadrooms(db, lifeDb, engineRows, typeById, events, now)
  const weeks = await workshopWeeks(db, team, allocEvents)
  const input: AllocationInput = {
    now: now.toISOString(),
    events: allocEvents,
    entries,
    engines,
    capacity: Object.fromEntries(weeks.map((w) => [w.weekStart, w.available])),
  }
  return { input, events, weeks, excluded }
}

async function engineHeadrooms(db: Db, lifeDb: Knex, engineRows: any[], typeById: Map<number, any>, events: AllocationEventDto[], now: Date) {
  const fleet = await fleetLife(lifeDb, now)
  const ctById = new Map((await loadComponentTypes(db)).map((c) => [c.id, c]))
  const ids = engineRows.map((e) => e.id)
  const sessions = ids.length ? await loadSessionUsage(db, (qb) => qb.whereIn('s.engine_id', ids)) : []
  const engines: AllocEngine[] = []
  const excluded: { serial: string; reason: string }[] = []
  for (const row of engineRows) {
    const et = typeById.get(row.engine_type_id)
    const life = fleet.engines.find((e) => e.id === row.id)
    if (row.status !== 'active') {
      excluded.push({ serial: row.serial, reason: `in ${row.status}: offered again once rebuilt and signed off` })
      continue
    }
    if (!et || !life) continue
    const cfg = lifeConfig(et)
    const duty = recentDuty(sessions.filter((s) => s.engineId === row.id), RECENT_SESSIONS)
    const parts: HeadroomPart[] = life.parts.map((p) => {
      const ct = ctById.get(p.componentTypeId)!
      return {
        name: `${p.positionLabel ?? p.typeName} ${p.serial}`,
        warningLevel: ct.warningLevel,
        limits: p.measures.map((m) => ({
          kind: m.kind,
          label: m.unit,
          used: m.used,
          limit: m.limit,
          ratePerHour: m.kind === 'hours' ? 1 : m.kind === 'km' ? duty.kmPerHour : m.kind === 'eqHours' ? eqPerRunningHour(duty, cfg, ct.damageExponent) : 0,
        })),
      }
    })
    const now0 = headroomNow(parts)
    const fresh = headroomFresh(parts)
    // An engine that may not run as it stands (a part over, a position empty, an inspection open) starts due.
    const blocked = life.emptyPositions.length > 0 || life.overRevFlags.immediateInspection || life.worst.status === 'over'
    const freshHours = Math.min(fresh.hours, NO_LIMIT_HOURS)
    engines.push({
      id: row.id,
      serial: row.serial,
      headroomHours: blocked ? 0 : Math.min(now0.hours, freshHours),
      governing: blocked ? (life.overRevFlags.immediateInspection ? 'immediate inspection open' : life.emptyPositions.length ? 'build incomplete' : now0.governing) : now0.governing,
      freshHeadroomHours: freshHours,
      freshGoverning: fresh.governing,
      eventIds: events.filter((e) => e.series === et.series).map((e) => e.id),
    })
  }
  return { engines, excluded }
}

/** Each week a rebuild slot opens in: the workshop's rebuilds, less those other plans have booked. */
export async function workshopWeeks(db: Db, team: TeamRef, events: AllocEvent[]): Promise<AllocationWeekDto[]> {
  const weeks = [...new Set(events.map(rebuildWeek))].sort()
  if (!weeks.length) return []
  const supplier = await db('organisations').where('id', team.supplierId).first('workshop_rebuilds_per_week')
  const base = supplier?.workshop_rebuilds_per_week ?? DEFAULT_WEEKLY_REBUILDS
  const set = await db('workshop_weeks').where('supplier_id', team.supplierId).whereIn('week_start', weeks).select('week_start', 'rebuilds')
  const setBy = new Map(set.map((r: any) => [dayOf(r.week_start), Number(r.rebuilds)]))
  const eventIds = events.map((e) => e.id)
  const booked = await db('planned_rebuilds')
    .where('supplier_id', team.supplierId)
    .whereIn('week_start', weeks)
    // This team's bookings for the events planned here are what the plan replaces.
    .whereNot((w) => w.where('team_id', team.id).whereIn('before_event_id', eventIds.length ? eventIds : [0]))
    .select('week_start')
    .count({ n: '*' })
    .groupBy('week_start')
  const bookedBy = new Map(booked.map((r: any) => [dayOf(r.week_start), Number(r.n)]))
  return weeks.map((w) => {
    const capacity = setBy.get(w) ?? Number(base)
    const bookedElsewhere = bookedBy.get(w) ?? 0
    return { weekStart: w, capacity, bookedElsewhere, available: Math.max(0, capacity - bookedElsewhere) }
  })
}

/** A DATE column as YYYY-MM-DD whether the driver hands back a Date or a string. */
export function dayOf(v: unknown): string {
  // The pool reads dates in UTC (knexfile), so a DATE arrives as midnight UTC.
  if (v instanceof Date) return v.toISOString().slice(0, 10)
  return String(v).slice(0, 10)
}

/** The event plans as they stand, matched to the entries by car; the team's booked rebuilds. */
export async function currentPlan(db: Db, team: TeamRef, input: AllocationInput): Promise<ProposedPlan> {
  const eventIds = input.events.map((e) => e.id)
  if (!eventIds.length) return { assignments: [], rebuilds: [] }
  const plans = await db('event_plans').where('team_id', team.id).whereIn('event_id', eventIds)
  const assignments: PlanAssignment[] = []
  for (const entry of input.entries) {
    const p = plans.find((r: any) => r.event_id === entry.eventId && (r.chassis ?? '').toUpperCase() === entry.chassis.toUpperCase())
    if (p) assignments.push({ entryId: entry.id, engineId: p.engine_id })
  }
  const rebuilds = await db('planned_rebuilds').where('team_id', team.id).whereIn('before_event_id', eventIds).select('engine_id', 'before_event_id')
  return { assignments, rebuilds: rebuilds.map((r: any) => ({ engineId: r.engine_id, beforeEventId: r.before_event_id })) }
}
