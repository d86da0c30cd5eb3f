// Life accounting for serialised life-limited parts.
// Pure: no clock, no I/O. Every figure here is an aid to the supplier's service
// instructions, inspection and licensed practice, never a substitute for them.

import type { OverRevBandRule, OverRevEvent } from './over-rev'
import { eqCacheKey, equivalentHoursFromMoments, type RpmMoments } from './rpm-moments'

export type { OverRevEvent }

export type LimitKind = 'hours' | 'km' | 'eqHours' | 'overRev'

// ok: below warningLevel; warning: >= warningLevel (plan the rebuild);
// due: >= dueLevel (rebuild due, plan teardown now); over: >= 1.0 (limit reached, must not run)
export type LifeStatus = 'ok' | 'warning' | 'due' | 'over'

export type OverRevBand = OverRevBandRule

/** overRevBands sorted ascending by minRpm */
export interface EngineTypeLifeConfig {
  referenceRpm: number
  /** the worst steady duty the engine type allows: the forecast's rate when no duty is known */
  revLimitRpm: number
  bandWidthRpm: number
  overRevBands: OverRevBand[]
}

export interface ComponentLimits {
  hours: number | null
  km: number | null
  eqHours: number | null
  /** band id -> allowed events (missing = no limit) */
  overRevEvents: Record<string, number>
  /** any event in this band or a higher band -> immediate inspection flag */
  immediateInspectionBand: string | null
  warningLevel: number
  dueLevel: number
  /** p in (rpm/ref)^p, p = 2m+1; 0 gives plain hours */
  damageExponent: number
}

export interface SessionUsage {
  sessionId: number
  /** ISO date-time of the session */
  at: string
  runningSeconds: number
  distanceKm: number
  /** seconds per rpm band; band i covers [i*bandWidth, (i+1)*bandWidth) */
  histogram: number[]
  /** the band width the histogram was binned with, when it differs from the engine type's today */
  bandWidthRpm?: number
  /**
   * Running time by ln(rpm) moments (sessions read from a logger file): equivalent hours exact to
   * their definition. Without them (a session entered by hand) the histogram is evaluated at band
   * midpoints, an approximation the session page marks.
   */
  rpmMoments?: RpmMoments | null
  /**
   * true when the session has rpm moments (read from a logger file) even if they were not loaded:
   * its equivalent hours then come from the moments or from eqHoursCache, never from band midpoints
   */
  exact?: boolean
  /** exact equivalent hours by eqCacheKey(exponent, reference rpm), evaluated from the moments */
  eqHoursCache?: Record<string, number> | null
  /** with the verdict (bandId) decided when the session was read; life counts it as stored */
  overRevs: OverRevEvent[]
}

export interface PartUsage {
  hours: number
  km: number
  eqHours: number
  overRevCounts: Record<string, number>
  sessions: number
  immediateInspection: boolean
}

export interface LimitMeasure {
  kind: LimitKind
  bandId?: string
  label: string
  unit: 'h' | 'km' | 'eq. h' | 'events'
  used: number
  limit: number
  fraction: number
  left: number
}

export interface PartLife {
  usage: PartUsage
  measures: LimitMeasure[]
  governing: LimitMeasure | null
  /** largest measure fraction, 0 when no limits */
  fraction: number
  status: LifeStatus
  immediateInspection: boolean
}

export interface Installation {
  componentId: number
  engineId: number
  position: string
  from: string
  /** null = still installed */
  to: string | null
}

export type EngineSession = SessionUsage & { engineId: number }

export interface AccumulateOptions {
  /**
   * Over-revs in sessions before this moment no longer raise the immediate-inspection
   * flag (the inspection has been done and signed off). Life still counts them.
   */
  inspectionClearedAt?: string | null
}

const SECONDS_PER_HOUR = 3600

// Relative slack so that float noise (0.1 + 0.7 ...) cannot hide a threshold crossing:
// near a boundary the stricter status wins.
const STATUS_EPSILON = 1e-9

const STATUS_RANK: Record<LifeStatus, number> = { ok: 0, warning: 1, due: 2, over: 3 }

function timeOf(iso: string): number {
  const t = Date.parse(iso)
  if (Number.isNaN(t)) throw new RangeError(`not an ISO date-time: ${iso}`)
  return t
}

export function bandMidRpm(index: number, bandWidthRpm: number): number {
  return (index + 0.5) * bandWidthRpm
}

export function bandIndexForRpm(rpm: number, bandWidthRpm: number): number {
  if (!(bandWidthRpm > 0)) throw new RangeError('band width must be positive')
  if (!(rpm > 0)) return 0
  return Math.floor(rpm / bandWidthRpm)
}

/** t_eq = sum t_i (rpm_i / rpm_ref)^p; p = 0 gives plain hours. */
export function equivalentHoursFromBands(
  bands: { rpm: number; hours: number }[],
  referenceRpm: number,
  exponent: number,
): number {
  if (!(referenceRpm > 0)) throw new RangeError('reference rpm must be positive')
  let total = 0
  for (const b of bands) {
    if (b.hours === 0) continue
    // 0^0 is 1 in JS, so exponent 0 counts every band as plain hours, as intended.
    total += b.hours * Math.pow(b.rpm / referenceRpm, exponent)
  }
  return total
}

/**
 * Equivalent hours at the reference rpm from a histogram in seconds per band, evaluated at band
 * midpoints: an approximation (off by tens of per cent at high exponents), used only for sessions
 * that have no rpm moments.
 */
export function equivalentHoursAtBandMidpoints(histogramSeconds: number[], bandWidthRpm: number, referenceRpm: number, exponent: number): number {
  return equivalentHoursFromBands(
    histogramSeconds.map((s, i) => ({ rpm: bandMidRpm(i, bandWidthRpm), hours: s / SECONDS_PER_HOUR })),
    referenceRpm,
    exponent,
  )
}

/** A session's equivalent hours: exact from its rpm moments, else approximate from its histogram. */
export function sessionEquivalentHours(
  s: Pick<SessionUsage, 'sessionId' | 'runningSeconds' | 'histogram' | 'rpmMoments' | 'bandWidthRpm' | 'exact' | 'eqHoursCache'>,
  cfg: Pick<EngineTypeLifeConfig, 'referenceRpm' | 'bandWidthRpm'>,
  exponent: number,
): number {
  if (s.rpmMoments) return equivalentHoursFromMoments(s.rpmMoments, cfg.referenceRpm, exponent)
  if (s.exact) {
    if (exponent === 0) return s.runningSeconds / SECONDS_PER_HOUR
    const cached = s.eqHoursCache?.[eqCacheKey(exponent, cfg.referenceRpm)]
    // an exact session must never fall back to band midpoints silently
    if (cached === undefined) throw new RangeError(`session ${s.sessionId}: equivalent hours for p = ${exponent} at ${cfg.referenceRpm} rpm were not loaded`)
    return cached
  }
  return equivalentHoursAtBandMidpoints(s.histogram, s.bandWidthRpm ?? cfg.bandWidthRpm, cfg.referenceRpm, exponent)
}

export { minerSum } from './fatigue'
export { basquin } from './fatigue'

export function emptyUsage(): PartUsage {
  return { hours: 0, km: 0, eqHours: 0, overRevCounts: {}, sessions: 0, immediateInspection: false }
}

function bandRank(bandId: string, cfg: EngineTypeLifeConfig): number {
  return cfg.overRevBands.findIndex((b) => b.id === bandId)
}

function triggersInspection(bandId: string, cfg: EngineTypeLifeConfig, limits: ComponentLimits): boolean {
  const trigger = limits.immediateInspectionBand
  if (trigger === null) return false
  if (bandId === trigger) return true
  const triggerRank = bandRank(trigger, cfg)
  const rank = bandRank(bandId, cfg)
  return triggerRank >= 0 && rank >= triggerRank
}

/** Returns a new usage with the session added; the inputs are not changed. */
export function addSession(
  usage: PartUsage,
  s: SessionUsage,
  cfg: EngineTypeLifeConfig,
  limits: ComponentLimits,
  opts: AccumulateOptions = {},
): PartUsage {
  const overRevCounts = { ...usage.overRevCounts }
  let inspection = usage.immediateInspection
  const clearedAt = opts.inspectionClearedAt ?? null
  const flagCounts = clearedAt === null || timeOf(s.at) >= timeOf(clearedAt)
  for (const ev of s.overRevs) {
    // the verdict stored with the event, the same one the session page and alerts show
    const bandId = ev.bandId
    overRevCounts[bandId] = (overRevCounts[bandId] ?? 0) + 1
    if (flagCounts && triggersInspection(bandId, cfg, limits)) inspection = true
  }
  return {
    hours: usage.hours + s.runningSeconds / SECONDS_PER_HOUR,
    km: usage.km + s.distanceKm,
    eqHours: usage.eqHours + sessionEquivalentHours(s, cfg, limits.damageExponent),
    overRevCounts,
    sessions: usage.sessions + 1,
    immediateInspection: inspection,
  }
}

export function accumulateUsage(
  sessions: SessionUsage[],
  cfg: EngineTypeLifeConfig,
  limits: ComponentLimits,
  opts: AccumulateOptions = {},
): PartUsage {
  return sessions.reduce((u, s) => addSession(u, s, cfg, limits, opts), emptyUsage())
}

function measure(
  kind: LimitKind,
  label: string,
  unit: LimitMeasure['unit'],
  used: number,
  limit: number,
  bandId?: string,
): LimitMeasure {
  // A zero allowance (e.g. no events of a band permitted) is reached by the first use.
  const fraction = limit > 0 ? used / limit : used > 0 ? 1 : 0
  const m: LimitMeasure = { kind, label, unit, used, limit, fraction, left: Math.max(0, limit - used) }
  if (bandId !== undefined) m.bandId = bandId
  return m
}

export function evaluatePartLife(usage: PartUsage, limits: ComponentLimits, cfg: EngineTypeLifeConfig): PartLife {
  const measures: LimitMeasure[] = []
  if (limits.hours !== null) measures.push(measure('hours', 'Running hours', 'h', usage.hours, limits.hours))
  if (limits.km !== null) measures.push(measure('km', 'Distance', 'km', usage.km, limits.km))
  if (limits.eqHours !== null) {
    measures.push(measure('eqHours', 'Equivalent hours', 'eq. h', usage.eqHours, limits.eqHours))
  }
  const bandIds = cfg.overRevBands.map((b) => b.id)
  for (const id of Object.keys(limits.overRevEvents)) if (!bandIds.includes(id)) bandIds.push(id)
  for (const id of bandIds) {
    const allowed = limits.overRevEvents[id]
    if (allowed === undefined || allowed === null) continue
    const band = cfg.overRevBands.find((b) => b.id === id)
    measures.push(
      measure('overRev', `Over-rev events, ${band?.label ?? id}`, 'events', usage.overRevCounts[id] ?? 0, allowed, id),
    )
  }
  let governing: LimitMeasure | null = null
  for (const m of measures) if (governing === null || m.fraction > governing.fraction) governing = m
  const fraction = governing?.fraction ?? 0
  return {
    usage,
    measures,
    governing,
    fraction,
    status: statusFor(fraction, limits),
    immediateInspection: usage.immediateInspection,
  }
}

export function statusFor(fraction: number, limits: Pick<ComponentLimits, 'warningLevel' | 'dueLevel'>): LifeStatus {
  // An unreadable figure must never pass as ok.
  if (Number.isNaN(fraction)) return 'over'
  const reached = (level: number) => fraction >= level * (1 - STATUS_EPSILON)
  if (reached(1)) return 'over'
  if (reached(limits.dueLevel)) return 'due'
  if (reached(limits.warningLevel)) return 'warning'
  return 'ok'
}

export function worstStatus(statuses: LifeStatus[]): LifeStatus {
  let worst: LifeStatus = 'ok'
  for (const s of statuses) if (STATUS_RANK[s] > STATUS_RANK[worst]) worst = s
  return worst
}

function byTimeThenId(a: SessionUsage, b: SessionUsage): number {
  return timeOf(a.at) - timeOf(b.at) || a.sessionId - b.sessionId
}

function installedAt(inst: Installation, t: number): boolean {
  return timeOf(inst.from) <= t && (inst.to === null || t < timeOf(inst.to))
}

/**
 * Sessions that a component ran in, across every engine it has been fitted to
 * (life follows the part, not the engine). Time order; a session counts once.
 */
export function sessionsForComponent(
  componentId: number,
  installations: Installation[],
  sessions: EngineSession[],
): SessionUsage[] {
  const mine = installations.filter((i) => i.componentId === componentId)
  return sessions
    .filter((s) => {
      const t = timeOf(s.at)
      return mine.some((i) => i.engineId === s.engineId && installedAt(i, t))
    })
    .sort(byTimeThenId)
}

/** The build of an engine at a moment: the installations open then, by position. */
export function buildAt(engineId: number, at: string, installations: Installation[]): Installation[] {
  const t = timeOf(at)
  return installations
    .filter((i) => i.engineId === engineId && installedAt(i, t))
    .sort((a, b) => a.position.localeCompare(b.position, 'en', { numeric: true }))
}

/** Running hours of an engine from its last rebuild (a session at the rebuild moment counts after it). */
export function hoursSinceRebuild(engineId: number, rebuiltAt: string | null, sessions: EngineSession[]): number {
  const from = rebuiltAt === null ? -Infinity : timeOf(rebuiltAt)
  let seconds = 0
  for (const s of sessions) if (s.engineId === engineId && timeOf(s.at) >= from) seconds += s.runningSeconds
  return seconds / SECONDS_PER_HOUR
}

/** Cumulative consumed fraction after each session, in time order, for charts. */
export function lifeTimeline(
  sessions: SessionUsage[],
  cfg: EngineTypeLifeConfig,
  limits: ComponentLimits,
): { sessionId: number; at: string; fraction: number; status: LifeStatus }[] {
  let usage = emptyUsage()
  return [...sessions].sort(byTimeThenId).map((s) => {
    usage = addSession(usage, s, cfg, limits)
    const life = evaluatePartLife(usage, limits, cfg)
    return { sessionId: s.sessionId, at: s.at, fraction: life.fraction, status: life.status }
  })
}
