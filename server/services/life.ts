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

export async function computeFleetLife(db: Knex, now: Date, revision?: number): Promise<FleetLife> {
  const rev = revision ?? (await lifeRevision(db))
  const [engineTypes, componentTypes, engineRows, installationRows, componentRows, sessionRows, eventRows, planRows, teamRows, oil] = await Promise.all([
    loadEngineTypes(db),
    loadComponentTypes(db),
    db('engines').select('*'),
    db('installations').select('id', 'component_id', 'engine_id', 'position', 'from_at', 'to_at'),
    db('components').select('id', 'serial', 'component_type_id', 'status', 'inspection_cleared_at'),
    loadSessionUsage(db),
    db('events').where('ends_at', '>', now).orderBy('starts_at'),
    db('event_plans').select('*'),
    db('organisations').where('kind', 'team').select('id', 'name'),
    oilStatusByEngine(db),
  ])
  const typeById = new Map(engineTypes.map((t) => [t.id, t]))
  const ctById = new Map(componentTypes.map((c) => [c.id, c]))
  const compById = new Map(componentRows.map((c: any) => [c.id, c]))
  const teamName = new Map(teamRows.map((t: any) => [t.id, t.name as string]))
  const engineById = new Map(engineRows.map((e: any) => [e.id, e]))

  const sessionsByEngine = new Map<number, SessionRow[]>()
  for (const s of sessionRows) {
    let list = sessionsByEngine.get(s.engineId)
    if (!list) sessionsByEngine.set(s.engineId, (list = []))
    list.push(s)
  }

  const installations = installationRows.map(toInstallation)
  const installsByComponent = new Map<number, typeof installations>()
  for (const i of installations) {
    let list = installsByComponent.get(i.componentId)
    if (!list) installsByComponent.set(i.componentId, (list = []))
    list.push(i)
  }

  // One prefix-sum index per engine; a part's usage is the sum over its installation windows.
  const indexes = new Map<number, UsageIndex>()
  const indexOf = (engineId: number) => {
    let idx = indexes.get(engineId)
    if (!idx) {
      const engine = engineById.get(engineId)
      idx = createUsageIndex(sessionsByEngine.get(engineId) ?? [], lifeConfig(typeById.get(engine.engine_type_id)!))
      indexes.set(engineId, idx)
    }
    return idx
  }
  const usageOfComponent = (componentId: number, componentType: ComponentTypeDto, inspectionClearedAt: string | null): PartUsage => {
    const limits = limitsOf(componentType)
    const total = emptyUsage()
    for (const inst of installsByComponent.get(componentId) ?? []) {
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
  const openByEngine = new Map<number, typeof installations>()
  for (const i of installations) {
    if (i.to !== null) continue
    let list = openByEngine.get(i.engineId)
    if (!list) openByEngine.set(i.engineId, (list = []))
    list.push(i)
  }

  const plansByEngine = new Map<number, any[]>()
  for (const p of planRows) {
    let list = plansByEngine.get(p.engine_id)
    if (!list) plansByEngine.set(p.engine_id, (list = []))
    list.push(p)
  }

  const parts = new Map<number, PartLifeDto & { engineId: number | null }>()
  const engines: EngineDetailDto[] = []

  for (const e of engineRows) {
    const et = typeById.get(e.engine_type_id)!
    const cfg = lifeConfig(et)
    const engineSessions = sessionsByEngine.get(e.id) ?? []
    const duty = recentDuty(engineSessions, RECENT_SESSIONS)
    const meanPerEvent = meanRunningPerEvent(engineSessions)

    // The engine's coming events: assigned ones first; else its series' calendar.
    const plans = plansByEngine.get(e.id) ?? []
    const seriesEvents = eventRows.filter((ev: any) => ev.series === et.series)
    const planned: (PlannedEvent & { assigned: boolean; chassis: string | null })[] = seriesEvents.map((ev: any) => {
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

    const open = openByEngine.get(e.id) ?? []
    const partDtos: PartLifeDto[] = []
    const forecastInputs = []
    for (const inst of open) {
      const comp = compById.get(inst.componentId)
      const ct = ctById.get(comp.component_type_id)!
      const limits = limitsOf(ct)
      const usage = usageOfComponent(comp.id, ct, iso(comp.inspection_cleared_at))
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
    const groups = groupLife(partDtos)
    const rebuiltAt = iso(e.rebuilt_at)
    const totalSeconds = engineSessions.reduce((t, s) => t + s.runningSeconds, 0)
    const sinceRebuild = engineSessions.filter((s) => !rebuiltAt || Date.parse(s.at) >= Date.parse(rebuiltAt)).reduce((t, s) => t + s.runningSeconds, 0)
    const status: LifeStatus = partDtos.length ? worstStatus(partDtos.map((p) => p.status)) : 'ok'

    engines.push({
      id: e.id,
      serial: e.serial,
      engineTypeId: et.id,
      engineTypeCode: et.code,
      engineTypeName: et.name,
      series: et.series,
      supplierId: e.supplier_id,
      teamId: e.team_id ?? null,
      teamName: e.team_id ? (teamName.get(e.team_id) ?? null) : null,
      status: e.status,
      location: e.location,
      chassis: e.chassis ?? null,
      builtAt: iso(e.built_at)!,
      rebuiltAt,
      totalHours: totalSeconds / 3600,
      hoursSinceRebuild: sinceRebuild / 3600,
      sessions: engineSessions.length,
      worst: {
        fraction: worstPart?.fraction ?? 0,
        status,
        governing: worstPart?.governing ?? null,
        serial: worstPart?.serial ?? null,
        position: worstPart?.positionLabel ?? null,
        typeName: worstPart?.typeName ?? null,
      },
      groups,
      overRevFlags: {
        immediateInspection: partDtos.some((p) => p.immediateInspection),
        events: engineSessions.reduce((t, s) => t + s.overRevs.length, 0),
      },
      oilStatus: oil.get(e.id)?.status ?? null,
      warningAt: efc.warningAt,
      limitAt: efc.limitAt,
      nextEvent: canFinish.find((c) => c.assigned) ?? canFinish[0] ?? null,
      canFinish,
      parts: partDtos,
      emptyPositions,
    })
  }

  // Parts on the shelf, quarantined or scrapped still have a life to show.
  for (const comp of componentRows) {
    if (parts.has(comp.id)) continue
    const ct = ctById.get(comp.component_type_id)!
    const history = installsByComponent.get(comp.id) ?? []
    const lastEngine = history.length ? engineById.get(history[history.length - 1]!.engineId) : null
    const et = lastEngine ? typeById.get(lastEngine.engine_type_id) : engineTypes.find((t) => t.positions.some((p) => p.componentTypeId === ct.id))
    if (!et) continue
    const usage = usageOfComponent(comp.id, ct, iso(comp.inspection_cleared_at))
    const life = evaluatePartLife(usage, limitsOf(ct), lifeConfig(et))
    parts.set(comp.id, { ...partDto(comp, ct, usage, life, null, null, null), engineId: null })
  }

  engines.sort((a, b) => a.serial.localeCompare(b.serial))
  return { revision: rev, computedAt: now.toISOString(), engines, parts }
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

// Cache: one whole-fleet computation per life revision and hour (forecasts depend on which events are still to come).
let cached: { key: string; value: Promise<FleetLife> } | null = null

export async function fleetLife(db: Knex, now = new Date()): Promise<FleetLife> {
  const revision = await lifeRevision(db)
  const key = `${revision}:${Math.floor(now.getTime() / 3_600_000)}`
  if (!cached || cached.key !== key) {
    const value = computeFleetLife(db, now, revision)
    cached = { key, value }
    value.catch(() => {
      if (cached?.value === value) cached = null
    })
  }
  return cached.value
}
