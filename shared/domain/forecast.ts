// Life forecast over coming events. A projection from planned running and recent duty:
// an aid to planning, never a substitute for the supplier's service instructions and inspection.

import {
  evaluatePartLife,
  sessionEquivalentHours,
  type ComponentLimits,
  type EngineTypeLifeConfig,
  type LifeStatus,
  type PartUsage,
  type SessionUsage,
} from './life'

export interface PlannedEvent {
  eventId: number
  name: string
  startsAt: string
  plannedSeconds: number | null
  plannedKm: number | null
}

export interface EngineDuty {
  /** the recent sessions the duty is read from (their running time, histogram and rpm moments) */
  recent: SessionUsage[]
  /** running seconds of the recent sessions; 0 when none ran */
  runningSeconds: number
  kmPerHour: number | null
  overRevsPerHour: Record<string, number>
}

export interface EventRef {
  eventId: number
  name: string
}

export interface PartForecast {
  warningAt: EventRef | null
  limitAt: EventRef | null
  fractionAfter: { eventId: number; fraction: number; status: LifeStatus }[]
  /** true when no recent running was known and the engine was assumed at its rev limit throughout (the worst case) */
  assumedDuty: boolean
}

export interface PartForecastDetail extends PartForecast {
  alreadyWarning: boolean
  alreadyOver: boolean
  /** first event after which the projected fraction reaches dueLevel (null if never or already due) */
  dueAt: EventRef | null
  alreadyDue: boolean
  /** true when some event had neither planned km nor a known km per hour: distance was not projected for it */
  kmUnknown: boolean
}

export interface ForecastOptions {
  defaultSecondsPerEvent: number
  /** project over-revs at the recent rate per running hour; off by default because over-revs cannot be planned */
  projectOverRevs?: boolean
}

const SECONDS_PER_HOUR = 3600

function timeOf(iso: string): number {
  const t = Date.parse(iso)
  if (Number.isNaN(t)) throw new RangeError(`not an ISO date-time: ${iso}`)
  return t
}

// Every part of an engine is projected over the same list of events: it is put in order once per list.
const ordered = new WeakMap<PlannedEvent[], PlannedEvent[]>()

function inDateOrder(events: PlannedEvent[]): PlannedEvent[] {
  let sorted = ordered.get(events)
  if (!sorted) {
    const keyed = events.map((e) => ({ e, t: timeOf(e.startsAt) }))
    sorted = keyed.sort((a, b) => a.t - b.t || a.e.eventId - b.e.eventId).map((k) => k.e)
    ordered.set(events, sorted)
  }
  return sorted
}

/** Duty of the last N sessions by `at`. */
export function recentDuty(sessions: SessionUsage[], lastN: number): EngineDuty {
  const recent = sessions
    .map((s) => ({ s, t: timeOf(s.at) }))
    .sort((a, b) => b.t - a.t || b.s.sessionId - a.s.sessionId)
    .slice(0, Math.max(0, Math.floor(lastN)))
    .map((k) => k.s)
  let runningSeconds = 0
  let km = 0
  const overRevs: Record<string, number> = {}
  for (const s of recent) {
    runningSeconds += s.runningSeconds
    km += s.distanceKm
    for (const ev of s.overRevs) overRevs[ev.bandId] = (overRevs[ev.bandId] ?? 0) + 1
  }
  const hours = runningSeconds / SECONDS_PER_HOUR
  const overRevsPerHour: Record<string, number> = {}
  if (hours > 0) for (const [id, n] of Object.entries(overRevs)) overRevsPerHour[id] = n / hours
  return { recent: runningSeconds > 0 ? recent : [], runningSeconds, kmPerHour: hours > 0 ? km / hours : null, overRevsPerHour }
}

/**
 * Equivalent hours per running hour of the recent sessions, evaluated as each session's own
 * equivalent hours (exact from rpm moments). With no recent running the rate is the engine
 * type's worst case, steady running at the rev limit: (rev limit / reference rpm)^p, so a
 * projection never assumes an easier duty than the engine can run.
 */
export function eqPerRunningHour(duty: EngineDuty, cfg: EngineTypeLifeConfig, exponent: number): number {
  if (duty.runningSeconds <= 0) return Math.pow(cfg.revLimitRpm / cfg.referenceRpm, exponent)
  // the parts of one engine share its duty: each rate is summed once per duty and life configuration
  let rates = eqRates.get(duty)
  if (!rates) eqRates.set(duty, (rates = new Map()))
  const key = `${exponent}@${cfg.referenceRpm}/${cfg.bandWidthRpm}`
  let rate = rates.get(key)
  if (rate === undefined) {
    let eq = 0
    for (const s of duty.recent) eq += sessionEquivalentHours(s, cfg, exponent)
    rates.set(key, (rate = eq / (duty.runningSeconds / SECONDS_PER_HOUR)))
  }
  return rate
}
const eqRates = new WeakMap<EngineDuty, Map<string, number>>()

/**
 * Projects a part's life over coming events (taken in date order). Running per event from
 * plannedSeconds, else opts.defaultSecondsPerEvent; km from plannedKm, else running x km per hour;
 * equivalent hours from running x eqPerRunningHour. Over-rev counts stay as they are unless
 * opts.projectOverRevs. warningAt / dueAt / limitAt are null when never reached, and also when
 * already reached now (alreadyWarning / alreadyDue / alreadyOver say so).
 */
export function forecastPart(
  current: PartUsage,
  limits: ComponentLimits,
  cfg: EngineTypeLifeConfig,
  events: PlannedEvent[],
  duty: EngineDuty,
  opts: ForecastOptions,
): PartForecastDetail {
  const eqRate = eqPerRunningHour(duty, cfg, limits.damageExponent)
  const nowStatus = evaluatePartLife(current, limits, cfg).status
  const alreadyWarning = nowStatus !== 'ok'
  const alreadyDue = nowStatus === 'due' || nowStatus === 'over'
  const alreadyOver = nowStatus === 'over'

  let usage: PartUsage = { ...current, overRevCounts: { ...current.overRevCounts } }
  let warningAt: EventRef | null = null
  let dueAt: EventRef | null = null
  let limitAt: EventRef | null = null
  let kmUnknown = false
  const fractionAfter: PartForecast['fractionAfter'] = []

  for (const ev of inDateOrder(events)) {
    const hours = (ev.plannedSeconds ?? opts.defaultSecondsPerEvent) / SECONDS_PER_HOUR
    let km = 0
    if (ev.plannedKm !== null) km = ev.plannedKm
    else if (duty.kmPerHour !== null) km = hours * duty.kmPerHour
    else kmUnknown = true
    const overRevCounts = { ...usage.overRevCounts }
    if (opts.projectOverRevs) {
      for (const [id, rate] of Object.entries(duty.overRevsPerHour)) {
        overRevCounts[id] = (overRevCounts[id] ?? 0) + rate * hours
      }
    }
    usage = {
      ...usage,
      hours: usage.hours + hours,
      km: usage.km + km,
      eqHours: usage.eqHours + hours * eqRate,
      overRevCounts,
    }
    const life = evaluatePartLife(usage, limits, cfg)
    fractionAfter.push({ eventId: ev.eventId, fraction: life.fraction, status: life.status })
    const ref = { eventId: ev.eventId, name: ev.name }
    if (!alreadyWarning && warningAt === null && life.status !== 'ok') warningAt = ref
    if (!alreadyDue && dueAt === null && (life.status === 'due' || life.status === 'over')) dueAt = ref
    if (!alreadyOver && limitAt === null && life.status === 'over') limitAt = ref
  }

  return {
    warningAt,
    limitAt,
    dueAt,
    fractionAfter,
    assumedDuty: duty.runningSeconds <= 0,
    alreadyWarning,
    alreadyDue,
    alreadyOver,
    kmUnknown,
  }
}

export type CanFinishReason = 'already-over' | 'incomplete-build' | 'inspection' | 'projected-over' | 'no-projection'

export interface EngineForecast {
  warningAt: EventRef | null
  limitAt: EventRef | null
  canFinish: {
    eventId: number
    name: string
    ok: boolean
    worstFraction: number
    governingPartId: number | null
    /** why ok is false, null when ok (optional detail) */
    reason?: CanFinishReason | null
  }[]
  alreadyWarning?: boolean
  alreadyOver?: boolean
}

export interface EnginePartInput {
  componentId: number
  forecast: PartForecast & { alreadyOver: boolean; alreadyWarning?: boolean }
  immediateInspection: boolean
}

/**
 * Engine view over its parts. An event cannot be finished when any part is already over,
 * a position of the build has no part fitted (`emptyPositions`), a part is flagged for
 * immediate inspection, projected at or over its limit after the event, or has no
 * projection for it (an unknown is never reported as fit to run).
 */
export function forecastEngine(parts: EnginePartInput[], events: PlannedEvent[], build: { emptyPositions?: number } = {}): EngineForecast {
  const ordered = inDateOrder(events)
  const order = new Map(ordered.map((e, i) => [e.eventId, i]))
  const earliest = (refs: (EventRef | null)[]): EventRef | null => {
    let best: EventRef | null = null
    for (const r of refs) {
      if (r === null) continue
      const i = order.get(r.eventId) ?? Infinity
      if (best === null || i < (order.get(best.eventId) ?? Infinity)) best = r
    }
    return best
  }

  const anyOver = parts.some((p) => p.forecast.alreadyOver)
  const incomplete = (build.emptyPositions ?? 0) > 0
  const anyInspection = parts.some((p) => p.immediateInspection)

  const canFinish = ordered.map((ev) => {
    let worstFraction = 0
    let governingPartId: number | null = null
    let projectedOver = false
    let missing = false
    for (const p of parts) {
      const after = p.forecast.fractionAfter.find((f) => f.eventId === ev.eventId)
      if (after === undefined) {
        missing = true
        continue
      }
      if (governingPartId === null || after.fraction > worstFraction) {
        worstFraction = after.fraction
        governingPartId = p.componentId
      }
      if (after.status === 'over' || !(after.fraction < 1)) projectedOver = true
    }
    const reason: CanFinishReason | null = anyOver
      ? 'already-over'
      : incomplete
        ? 'incomplete-build'
        : anyInspection
        ? 'inspection'
        : projectedOver
          ? 'projected-over'
          : missing
            ? 'no-projection'
            : null
    return { eventId: ev.eventId, name: ev.name, ok: reason === null, worstFraction, governingPartId, reason }
  })

  return {
    warningAt: earliest(parts.map((p) => p.forecast.warningAt)),
    limitAt: earliest(parts.map((p) => p.forecast.limitAt)),
    canFinish,
    alreadyWarning: parts.some((p) => p.forecast.alreadyWarning === true || p.forecast.alreadyOver),
    alreadyOver: anyOver,
  }
}
