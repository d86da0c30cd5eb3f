// Fleet life: every part's consumed life, every engine's forecast, derived from the stored
// sessions and installations at read time (so a limit change moves the fractions at once).
// The whole-fleet result is cached per life revision and hour, shared by board, engine pages
// and the alert task; any write that moves life bumps the revision (see bumpLifeRevision).
import type { Knex } from 'knex'
import {
  emptyUsage,
  evaluatePartLife,
  worstStatus,
  type EngineSession,
  type LifeStatus,
  type PartUsage,
} from '#shared/domain/life'
import { forecastEngine, forecastPart, recentDuty, type PlannedEvent } from '#shared/domain/forecast'
import { createUsageIndex, type UsageIndex } from '#shared/domain/life-index'
import type { CanFinishDto, ComponentTypeDto, EngineDetailDto, EngineTypeDto, PartLifeDto } from '#shared/types/fleet'
import { iso } from '../utils/db'
import { idleHeld } from '../utils/idle-held'
import { oilStatusByEngine } from './oil'
import { loadSessionUsage } from './session-usage'
import {
  lifeConfig,
  lifeRevision,
  limitsOf,
  loadComponentTypes,
  loadEngineTypes,
  toInstallation,
} from './fleet-data'

const RECENT_SESSIONS = 10
const FALLBACK_SECONDS_PER_EVENT = 3 * 3600

export interface FleetLife {
  revision: number
  computedAt: string
  engines: EngineDetailDto[]
  /** every part ever installed, by component id, with the engine it is in now (if any) */
  parts: Map<number, PartLifeDto & { engineId: number | null }>
}

type SessionRow = EngineSession & { bandWidthRpm: number; eventId: number | null }

/**
 * The whole fleet's life, in four steps: read the rows, index them, work out each engine (its
 * fitted parts, their forecasts and the engine's summary), then the parts that sit in no engine.
 */
export async function computeFleetLife(db: Knex, now: Date, revision?: number): Promise<FleetLife> {
  const rev = revision ?? (await lifeRevision(db))
  return fleetLifeFromRows(await loadFleetRows(db, now, LIFE_ONLY), now, rev)
}

// Life reads an exact session's cached equivalent hours, never its histogram: the board's read and
// every other whole-fleet computation leave those histograms out.
const LIFE_ONLY = { lifeOnly: true } as const

/** Steps 2 to 4 on rows already read: the limit preview runs them twice on one read, with and without the change. */
export function fleetLifeFromRows(rows: FleetRows, now: Date, rev: number): FleetLife {
  const fleet = indexFleet(rows)
  const usageOf = partUsageCalculator(fleet)
  const parts = new Map<number, PartLifeDto & { engineId: number | null }>()
  const engines = fleet.engineRows.map((e) => engineLife(fleet, usageOf, e, parts))
  addPartsOutsideEngines(fleet, usageOf, parts)
  engines.sort((a, b) => a.serial.localeCompare(b.serial))
  return { revision: rev, computedAt: now.toISOString(), engines, parts }
}

export type FleetRows = Awaited<ReturnType<typeof loadFleetRows>>

/**
 * Step 1: everything life is derived from, read in one round of queries whatever the fleet size.
 * `sessions` narrows or extends the session read (the preview asks for extra equivalent-hour pairs, written nowhere).
 */
export async function loadFleetRows(db: Knex | Knex.Transaction, now: Date, sessions?: Parameters<typeof loadSessionUsage>[2], whereSessions?: Parameters<typeof loadSessionUsage>[1]) {
  const [engineTypes, componentTypes, engineRows, installationRows, componentRows, sessionRows, eventRows, planRows, teamRows, oil] = await Promise.all([
    loadEngineTypes(db),
    loadComponentTypes(db),
    db('engines').select('*'),
    db('installations').select('id', 'component_id', 'engine_id', 'position', 'from_at', 'to_at'),
    db('components').select('id', 'serial', 'component_type_id', 'status', 'inspection_cleared_at', 'serial_limits'),
    loadSessionUsage(db, whereSessions, sessions),
    db('events').where('ends_at', '>', now).orderBy('starts_at'),
    db('event_plans').select('*'),
    db('organisations').where('kind', 'team').select('id', 'name'),
    oilStatusByEngine(db),
  ])
  return { engineTypes, componentTypes, engineRows, installationRows, componentRows, sessionRows, eventRows, planRows, teamRows, oil }
}

function groupBy<T, K>(items: Iterable<T>, keyOf: (item: T) => K): Map<K, T[]> {
  const groups = new Map<K, T[]>()
  for (const item of items) {
    const key = keyOf(item)
    let list = groups.get(key)
    if (!list) groups.set(key, (list = []))
    list.push(item)
  }
  return groups
}

/** Step 2: the rows looked up by what each step asks for. */
function indexFleet(rows: FleetRows) {
  const installations = rows.installationRows.map(toInstallation)
  return {
    ...rows,
    typeById: new Map(rows.engineTypes.map((t) => [t.id, t])),
    ctById: new Map(rows.componentTypes.map((c) => [c.id, c])),
    compById: new Map(rows.componentRows.map((c: any) => [c.id, c])),
    teamName: new Map(rows.teamRows.map((t: any) => [t.id, t.name as string])),
    engineById: new Map(rows.engineRows.map((e: any) => [e.id, e])),
    sessionsByEngine: groupBy<SessionRow, number>(rows.sessionRows, (s) => s.engineId),
    installsByComponent: groupBy(installations, (i) => i.componentId),
    openByEngine: groupBy(installations.filter((i) => i.to === null), (i) => i.engineId),
    plansByEngine: groupBy<any, number>(rows.planRows, (p) => p.engine_id),
  }
}
type FleetIndex = ReturnType<typeof indexFleet>
type UsageOf = (comp: any, componentType: ComponentTypeDto) => PartUsage

/** A part's usage is the sum over its installation windows, each read from one prefix-sum index per engine. */
function partUsageCalculator(fleet: FleetIndex): UsageOf {
  const indexes = new Map<number, UsageIndex>()
  const indexOf = (engineId: number) => {
    let idx = indexes.get(engineId)
    if (!idx) {
      const engine = fleet.engineById.get(engineId)
      idx = createUsageIndex(fleet.sessionsByEngine.get(engineId) ?? [], lifeConfig(fleet.typeById.get(engine.engine_type_id)!))
      indexes.set(engineId, idx)
    }
    return idx
  }
  return (comp, componentType) => {
    const componentId: number = comp.id
    const inspectionClearedAt = iso(comp.inspection_cleared_at)
    const limits = limitsOf(componentType, comp)
    const total = emptyUsage()
    for (const inst of fleet.installsByComponent.get(componentId) ?? []) {
      const idx = indexOf(inst.engineId)
      const from = idx.lowerBound(Date.parse(inst.from))
      const to = inst.to ? idx.lowerBound(Date.parse(inst.to)) : idx.sessions.length
      const u = idx.usage(from, to, limits, { inspectionClearedAt })
      total.hours += u.hours
      total.km += u.km
      total.eqHours += u.eqHours
      total.sessions += u.sessions
      total.immediateInspection ||= u.immediateInspection
      for (const [band, n] of Object.entries(u.overRevCounts)) total.overRevCounts[band] = (total.overRevCounts[band] ?? 0) + n
    }
    return total
  }
}

type ComingEvent = PlannedEvent & { assigned: boolean; chassis: string | null }

/** The engine's coming events: its series' calendar, with the team's plan where the engine is assigned. */
function comingEvents(fleet: FleetIndex, engineId: number, et: EngineTypeDto): ComingEvent[] {
  const plans = fleet.plansByEngine.get(engineId) ?? []
  return fleet.eventRows
    .filter((ev: any) => ev.series === et.series)
    .map((ev: any) => {
      const plan = plans.find((p) => p.event_id === ev.id)
      return {
        eventId: ev.id,
        name: ev.name,
        startsAt: iso(ev.starts_at)!,
        plannedSeconds: plan?.planned_seconds ?? ev.planned_seconds ?? null,
        plannedKm: plan?.planned_km != null ? Number(plan.planned_km) : ev.planned_km != null ? Number(ev.planned_km) : null,
        assigned: Boolean(plan),
        chassis: plan?.chassis ?? null,
      }
    })
}

/** Step 3: one engine — its fitted parts' life and forecasts (recorded in `parts`), then the engine's summary. */
function engineLife(fleet: FleetIndex, usageOf: UsageOf, e: any, parts: Map<number, PartLifeDto & { engineId: number | null }>): EngineDetailDto {
  const et = fleet.typeById.get(e.engine_type_id)!
  const cfg = lifeConfig(et)
  const engineSessions = fleet.sessionsByEngine.get(e.id) ?? []
  const duty = recentDuty(engineSessions, RECENT_SESSIONS)
  const meanPerEvent = meanRunningPerEvent(engineSessions)
  const planned = comingEvents(fleet, e.id, et)

  const open = fleet.openByEngine.get(e.id) ?? []
  const partDtos: PartLifeDto[] = []
  const forecastInputs = []
  for (const inst of open) {
    const comp = fleet.compById.get(inst.componentId)
    const ct = fleet.ctById.get(comp.component_type_id)!
    const limits = limitsOf(ct, comp)
    const usage = usageOf(comp, ct)
    const life = evaluatePartLife(usage, limits, cfg)
    const fc = forecastPart(usage, limits, cfg, planned, duty, { defaultSecondsPerEvent: meanPerEvent ?? FALLBACK_SECONDS_PER_EVENT })
    forecastInputs.push({ componentId: comp.id, forecast: fc, immediateInspection: life.immediateInspection })
    const pos = et.positions.find((p) => p.position === inst.position)
    const dto = partDto(comp, ct, usage, life, fc, inst.position, pos?.label ?? inst.position)
    partDtos.push(dto)
    parts.set(comp.id, { ...dto, engineId: e.id })
  }
  partDtos.sort((a, b) => positionSort(et, a.position) - positionSort(et, b.position))

  const emptyPositions = et.positions.filter((p) => !open.some((i) => i.position === p.position))
  const efc = forecastEngine(forecastInputs, planned, { emptyPositions: emptyPositions.length })
  const plannedById = new Map(planned.map((p) => [p.eventId, p]))
  const canFinish: CanFinishDto[] = efc.canFinish.map((c) => ({
    ...c,
    reason: c.reason ?? null,
    dutyAssumed: duty.runningSeconds <= 0,
    startsAt: plannedById.get(c.eventId)!.startsAt,
    assigned: plannedById.get(c.eventId)!.assigned,
    chassis: plannedById.get(c.eventId)!.chassis,
  }))
  const worstPart = partDtos.reduce<PartLifeDto | null>((w, p) => (!w || p.fraction > w.fraction ? p : w), null)
  const rebuiltAt = iso(e.rebuilt_at)
  const totalSeconds = engineSessions.reduce((t, s) => t + s.runningSeconds, 0)
  const sinceRebuild = engineSessions.filter((s) => !rebuiltAt || Date.parse(s.at) >= Date.parse(rebuiltAt)).reduce((t, s) => t + s.runningSeconds, 0)
  const status: LifeStatus = partDtos.length ? worstStatus(partDtos.map((p) => p.status)) : 'ok'

  return {
    id: e.id,
    serial: e.serial,
    engineTypeId: et.id,
    engineTypeCode: et.code,
    engineTypeName: et.name,
    series: et.series,
    supplierId: e.supplier_id,
    teamId: e.team_id ?? null,
    teamName: e.team_id ? (fleet.teamName.get(e.team_id) ?? null) : null,
    status: e.status,
    location: e.location,
    chassis: e.chassis ?? null,
    builtAt: iso(e.built_at)!,
    rebuiltAt,
    totalHours: totalSeconds / 3600,
    hoursSinceRebuild: sinceRebuild / 3600,
    sessions: engineSessions.length,
    // time-ordered (session-usage), so the last one is the latest
    lastSession: engineSessions.length ? { id: engineSessions[engineSessions.length - 1]!.sessionId, startedAt: engineSessions[engineSessions.length - 1]!.at } : null,
    worst: {
      fraction: worstPart?.fraction ?? 0,
      status,
      governing: worstPart?.governing ?? null,
      serial: worstPart?.serial ?? null,
      position: worstPart?.positionLabel ?? null,
      typeName: worstPart?.typeName ?? null,
    },
    groups: groupLife(partDtos),
    overRevFlags: {
      immediateInspection: partDtos.some((p) => p.immediateInspection),
      events: engineSessions.reduce((t, s) => t + s.overRevs.length, 0),
    },
    oilStatus: fleet.oil.get(e.id)?.status ?? null,
    warningAt: efc.warningAt,
    limitAt: efc.limitAt,
    nextEvent: canFinish.find((c) => c.assigned) ?? canFinish[0] ?? null,
    canFinish,
    parts: partDtos,
    emptyPositions,
  }
}

/** Step 4: parts on the shelf, quarantined or scrapped still have a life to show (no forecast: no coming events). */
function addPartsOutsideEngines(fleet: FleetIndex, usageOf: UsageOf, parts: Map<number, PartLifeDto & { engineId: number | null }>) {
  for (const comp of fleet.componentRows) {
    if (parts.has(comp.id)) continue
    const ct = fleet.ctById.get(comp.component_type_id)!
    const history = fleet.installsByComponent.get(comp.id) ?? []
    const lastEngine = history.length ? fleet.engineById.get(history[history.length - 1]!.engineId) : null
    const et = lastEngine ? fleet.typeById.get(lastEngine.engine_type_id) : fleet.engineTypes.find((t) => t.positions.some((p) => p.componentTypeId === ct.id))
    if (!et) continue
    const usage = usageOf(comp, ct)
    const life = evaluatePartLife(usage, limitsOf(ct, comp), lifeConfig(et))
    parts.set(comp.id, { ...partDto(comp, ct, usage, life, null, null, null), engineId: null })
  }
}

function partDto(
  comp: { id: number; serial: string },
  ct: ComponentTypeDto,
  usage: PartUsage,
  life: ReturnType<typeof evaluatePartLife>,
  fc: ReturnType<typeof forecastPart> | null,
  position: string | null,
  positionLabel: string | null,
): PartLifeDto {
  return {
    componentId: comp.id,
    serial: comp.serial,
    position,
    positionLabel,
    componentTypeId: ct.id,
    typeName: ct.name,
    category: ct.category,
    status: life.status,
    fraction: life.fraction,
    governing: life.governing,
    measures: life.measures,
    hours: usage.hours,
    km: usage.km,
    eqHours: usage.eqHours,
    overRevCounts: usage.overRevCounts,
    immediateInspection: life.immediateInspection,
    // A part on the shelf has no coming events to be forecast against.
    warningAt: fc?.warningAt ?? null,
    dueAt: fc?.dueAt ?? null,
    limitAt: fc?.limitAt ?? null,
    assumedDuty: fc?.assumedDuty ?? false,
  }
}

function positionSort(et: EngineTypeDto, position: string | null) {
  const p = et.positions.find((x) => x.position === position)
  return p ? p.sort : 9999
}

/** The engine's typical running over one event weekend, from the events it has run. */
function meanRunningPerEvent(sessions: SessionRow[]): number | null {
  const perEvent = new Map<number, number>()
  for (const s of sessions) if (s.eventId !== null) perEvent.set(s.eventId, (perEvent.get(s.eventId) ?? 0) + s.runningSeconds)
  if (perEvent.size === 0) return null
  let total = 0
  for (const v of perEvent.values()) total += v
  return total / perEvent.size
}

function groupLife(parts: PartLifeDto[]) {
  const byCategory = new Map<string, PartLifeDto>()
  for (const p of parts) {
    const w = byCategory.get(p.category)
    if (!w || p.fraction > w.fraction) byCategory.set(p.category, p)
  }
  return [...byCategory.entries()].map(([category, p]) => ({ category, fraction: p.fraction, status: p.status, governing: p.governing, serial: p.serial }))
}

// Cache: one whole-fleet computation per life revision and hour (forecasts depend on which events are
// still to come). The rows it was computed from stay beside it for a few idle minutes, so that a
// limit preview on the same data starts from them instead of reading the whole fleet again.
interface CachedFleet {
  key: string
  value: Promise<FleetLife>
  rows: ReturnType<typeof idleHeld<Promise<FleetRows>>>
}
const KEEP_ROWS_MS = 10 * 60_000
let cached: CachedFleet | null = null

const cacheKey = (revision: number, now: Date) => `${revision}:${Math.floor(now.getTime() / 3_600_000)}`

export async function fleetLife(db: Knex, now = new Date()): Promise<FleetLife> {
  const revision = await lifeRevision(db)
  const key = cacheKey(revision, now)
  if (!cached || cached.key !== key) {
    const read = loadFleetRows(db, now, LIFE_ONLY)
    const value = read.then((r) => fleetLifeFromRows(r, now, revision))
    const entry: CachedFleet = { key, value, rows: idleHeld(KEEP_ROWS_MS) }
    entry.rows.set(read)
    cached = entry
    value.catch(() => {
      if (cached === entry) cached = null
    })
  } else {
    cached.rows.get() // used again: its rows stay a while longer
  }
  return cached.value
}

/**
 * The rows and the life the cache holds for this revision and hour, while its rows are kept (null
 * otherwise). The rows were read without one snapshot: the caller checks that they match its own.
 */
export function cachedFleet(revision: number, now: Date): { rows: Promise<FleetRows>; life: Promise<FleetLife> } | null {
  const rows = cached?.key === cacheKey(revision, now) ? cached.rows.get() : null
  return rows ? { rows, life: cached!.value } : null
}
