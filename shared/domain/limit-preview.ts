// What a limit change would do to the fleet, read off two life computations of the same data:
// one with the limits as they are, one with the proposed change. Pure: the caller runs the life
// engine twice and hands both results here. The figures are an aid to the supplier's service
// instructions, inspection and licensed practice, never a substitute for them.
import type { LifeStatus, LimitMeasure } from './life'

export interface PreviewPart {
  componentId: number
  serial: string
  typeName: string
  status: LifeStatus
  fraction: number
  governing: Pick<LimitMeasure, 'label'> | null
  measures: Pick<LimitMeasure, 'unit' | 'left'>[]
  dueAt: { eventId: number; name: string } | null
}

export interface PreviewEngine {
  id: number
  serial: string
  teamId: number | null
  teamName: string | null
  parts: PreviewPart[]
  /** the coming events in date order, with the engine's verdict for each */
  canFinish: { eventId: number; name: string; startsAt: string; ok: boolean; reason: string | null }[]
}

export interface PreviewFleet {
  engines: PreviewEngine[]
  /** parts in no engine (shelf, quarantined, scrapped): their status can change too */
  looseParts: PreviewPart[]
}

interface EngineRef {
  engineId: number
  engineSerial: string
  teamId: number | null
  teamName: string | null
}

export interface StatusChange extends Partial<EngineRef> {
  componentId: number
  serial: string
  typeName: string
  before: LifeStatus
  after: LifeStatus
  fractionBefore: number
  fractionAfter: number
  governingAfter: string | null
}

export interface FinishChange extends EngineRef {
  eventId: number
  eventName: string
  startsAt: string
  /** why the engine cannot finish it after the change (forecast reason) */
  reason: string | null
}

/** When an engine comes due: now, at a coming event, or not within the coming events. */
export type DuePoint = { at: 'now' } | { at: 'event'; eventId: number; name: string; startsAt: string } | { at: 'none' }

export interface DueChange extends EngineRef {
  before: DuePoint
  after: DuePoint
}

export type LeftByUnit = Record<'h' | 'km' | 'eq. h', number>

export interface TeamRemaining {
  teamId: number | null
  teamName: string
  parts: number
  /** sum over the parts of (1 - consumed fraction), floored at 0: one unit is one new part's whole life */
  partLivesBefore: number
  partLivesAfter: number
  leftBefore: LeftByUnit
  leftAfter: LeftByUnit
}

export interface LimitPreviewResult {
  statusChanges: StatusChange[]
  /** engine and event pairs that could be finished before the change and cannot after it */
  cannotFinish: FinishChange[]
  /** the other way: pairs the change makes finishable */
  canFinishNow: FinishChange[]
  /** engines that come due earlier than the teardown today's limits plan for them */
  dueEarlier: DueChange[]
  dueLater: DueChange[]
  teams: TeamRemaining[]
}

export interface LimitPreviewSummary {
  statusChanges: number
  cannotFinish: number
  canFinishNow: number
  dueEarlier: number
  dueLater: number
  teams: { teamId: number | null; teamName: string; partLivesDifference: number }[]
}

export const NO_TEAM = 'No team (supplier stock)'
const STATUS_RANK: Record<LifeStatus, number> = { ok: 0, warning: 1, due: 2, over: 3 }

/** The engine's due point: now when a fitted part is already due or over, else the first coming event after which one is. */
export function duePoint(engine: PreviewEngine): DuePoint {
  if (engine.parts.some((p) => STATUS_RANK[p.status] >= STATUS_RANK.due)) return { at: 'now' }
  const dueEvents = new Set(engine.parts.map((p) => p.dueAt?.eventId).filter((id): id is number => id !== undefined))
  const first = engine.canFinish.find((c) => dueEvents.has(c.eventId))
  return first ? { at: 'event', eventId: first.eventId, name: first.name, startsAt: first.startsAt } : { at: 'none' }
}

/** Orders due points: now first, then by the event's date, no due point last. */
export function dueOrder(d: DuePoint): number {
  if (d.at === 'now') return -Infinity
  if (d.at === 'none') return Infinity
  return Date.parse(d.startsAt)
}

function emptyLeft(): LeftByUnit {
  return { h: 0, km: 0, 'eq. h': 0 }
}

function addLeft(into: LeftByUnit, part: PreviewPart) {
  for (const m of part.measures) if (m.unit !== 'events') into[m.unit] += m.left
}

function engineRef(e: PreviewEngine): EngineRef {
  return { engineId: e.id, engineSerial: e.serial, teamId: e.teamId, teamName: e.teamName }
}

function statusChange(before: PreviewPart, after: PreviewPart, engine: PreviewEngine | null): StatusChange | null {
  if (before.status === after.status) return null
  return {
    ...(engine ? engineRef(engine) : {}),
    componentId: after.componentId,
    serial: after.serial,
    typeName: after.typeName,
    before: before.status,
    after: after.status,
    fractionBefore: before.fraction,
    fractionAfter: after.fraction,
    governingAfter: after.governing?.label ?? null,
  }
}

/**
 * Compares the fleet before and after a change. Engines and parts are matched by id; both
 * computations must come from the same rows (the same fleet), so an engine or part missing on
 * one side is a caller's error.
 */
export function compareFleets(before: PreviewFleet, after: PreviewFleet): LimitPreviewResult {
  const afterEngines = new Map(after.engines.map((e) => [e.id, e]))
  const afterLoose = new Map(after.looseParts.map((p) => [p.componentId, p]))
  const result: LimitPreviewResult = { statusChanges: [], cannotFinish: [], canFinishNow: [], dueEarlier: [], dueLater: [], teams: [] }
  const teams = new Map<number | null, TeamRemaining>()
  const teamOf = (teamId: number | null, teamName: string | null) => {
    let t = teams.get(teamId)
    if (!t) teams.set(teamId, (t = { teamId, teamName: teamName ?? NO_TEAM, parts: 0, partLivesBefore: 0, partLivesAfter: 0, leftBefore: emptyLeft(), leftAfter: emptyLeft() }))
    return t
  }
  const countPart = (team: TeamRemaining, b: PreviewPart, a: PreviewPart) => {
    team.parts++
    team.partLivesBefore += Math.max(0, 1 - b.fraction)
    team.partLivesAfter += Math.max(0, 1 - a.fraction)
    addLeft(team.leftBefore, b)
    addLeft(team.leftAfter, a)
  }

  for (const eb of before.engines) {
    const ea = afterEngines.get(eb.id)
    if (!ea) throw new RangeError(`engine ${eb.id} is missing after the change`)
    const team = teamOf(eb.teamId, eb.teamName)
    const partsAfter = new Map(ea.parts.map((p) => [p.componentId, p]))
    for (const pb of eb.parts) {
      const pa = partsAfter.get(pb.componentId)
      if (!pa) throw new RangeError(`part ${pb.componentId} is missing after the change`)
      const change = statusChange(pb, pa, eb)
      if (change) result.statusChanges.push(change)
      countPart(team, pb, pa)
    }
    const finishAfter = new Map(ea.canFinish.map((c) => [c.eventId, c]))
    for (const cb of eb.canFinish) {
      const ca = finishAfter.get(cb.eventId)
      if (!ca || ca.ok === cb.ok) continue
      const row = { ...engineRef(eb), eventId: cb.eventId, eventName: cb.name, startsAt: cb.startsAt, reason: ca.reason }
      if (cb.ok) result.cannotFinish.push(row)
      else result.canFinishNow.push(row)
    }
    const dueBefore = duePoint(eb)
    const dueAfter = duePoint(ea)
    // (now - now and none - none are NaN: no move, as intended)
    const order = dueOrder(dueAfter) - dueOrder(dueBefore)
    if (order < 0) result.dueEarlier.push({ ...engineRef(eb), before: dueBefore, after: dueAfter })
    else if (order > 0) result.dueLater.push({ ...engineRef(eb), before: dueBefore, after: dueAfter })
  }
  for (const pb of before.looseParts) {
    const pa = afterLoose.get(pb.componentId)
    if (!pa) throw new RangeError(`part ${pb.componentId} is missing after the change`)
    const change = statusChange(pb, pa, null)
    if (change) result.statusChanges.push(change)
    countPart(teamOf(null, null), pb, pa)
  }

  const byEngine = (a: Partial<EngineRef> & { serial?: string }, b: Partial<EngineRef> & { serial?: string }) =>
    (a.teamName ?? NO_TEAM).localeCompare(b.teamName ?? NO_TEAM) || (a.engineSerial ?? '').localeCompare(b.engineSerial ?? '') || (a.serial ?? '').localeCompare(b.serial ?? '')
  result.statusChanges.sort(byEngine)
  result.cannotFinish.sort((a, b) => a.startsAt.localeCompare(b.startsAt) || byEngine(a, b))
  result.canFinishNow.sort((a, b) => a.startsAt.localeCompare(b.startsAt) || byEngine(a, b))
  result.dueEarlier.sort(byEngine)
  result.dueLater.sort(byEngine)
  // teams by name, the supplier's own stock last
  result.teams = [...teams.values()].sort((a, b) => Number(a.teamId === null) - Number(b.teamId === null) || a.teamName.localeCompare(b.teamName))
  return result
}

/** The counts the audit keeps and the save is checked against. Part-lives rounded to 1e-6 so the summary is stable as text. */
export function summarisePreview(r: LimitPreviewResult): LimitPreviewSummary {
  return {
    statusChanges: r.statusChanges.length,
    cannotFinish: r.cannotFinish.length,
    canFinishNow: r.canFinishNow.length,
    dueEarlier: r.dueEarlier.length,
    dueLater: r.dueLater.length,
    teams: r.teams.map((t) => ({ teamId: t.teamId, teamName: t.teamName, partLivesDifference: Math.round((t.partLivesAfter - t.partLivesBefore) * 1e6) / 1e6 })),
  }
}
