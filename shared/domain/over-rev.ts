// One verdict per over-rev event, decided once and read by every screen and by life.
//
// An excursion opens at the first sample at or above the lowest band's minRpm and closes at
// the first sample below (that minRpm - its hysteresisRpm), so chatter around the threshold
// counts once (common practice). Within it, the time spent at or above each band's threshold
// is measured (time step rule of the trace: a step takes the rpm of the sample that starts it)
// and the event belongs to the highest band whose threshold its peak reached and whose minimum
// duration that time met. A 0.2 s spike into a higher band inside a longer excursion in a lower
// band therefore counts once, against the lower band.
//
// The event keeps its time-at-rpm profile, so that the verdict can be decided again from the
// stored event when the engine type's bands are edited.

export interface OverRevBandRule {
  id: string
  label: string
  /** whole rpm */
  minRpm: number
  minDurationS: number
  hysteresisRpm: number
}

export interface OverRevEvent {
  bandId: string
  /** s from the first sample of the file */
  startS: number
  /** whole excursion, from its first sample to the sample that closed it */
  durationS: number
  peakRpm: number
  /** seconds at or above each band's threshold, by band id (events from a logger file) */
  secondsAbove?: Record<string, number>
  /** [rpm in tenths, seconds] in descending rpm: time of the excursion at each rpm (floored to 0.1 rpm) */
  profile?: [number, number][]
}

/** Decimal timestamps (0.1 + 0.2) must not drop an event that lasts exactly minDurationS. */
export const DURATION_EPSILON_S = 1e-9

/** Tenths of rpm: floor(rpm * 10) >= threshold * 10 exactly when rpm >= a whole-rpm threshold. */
export function profileLevel(rpm: number): number {
  return Math.floor(rpm * 10 + 1e-9)
}

export function secondsAtOrAbove(profile: [number, number][], rpm: number): number {
  const level = rpm * 10
  let s = 0
  for (const [l, sec] of profile) if (l >= level) s += sec
  return s
}

export interface OverRevVerdict {
  bandId: string
  secondsAbove: Record<string, number>
}

/** The band of an excursion, or null when it met no band's minimum duration (not an event). */
export function classifyExcursion(profile: [number, number][], peakRpm: number, bands: OverRevBandRule[]): OverRevVerdict | null {
  const sorted = [...bands].sort((a, b) => a.minRpm - b.minRpm)
  const secondsAbove: Record<string, number> = {}
  for (const b of sorted) secondsAbove[b.id] = secondsAtOrAbove(profile, b.minRpm)
  for (let i = sorted.length - 1; i >= 0; i--) {
    const b = sorted[i]!
    if (peakRpm >= b.minRpm && secondsAbove[b.id]! + DURATION_EPSILON_S >= b.minDurationS) return { bandId: b.id, secondsAbove }
  }
  return null
}

/**
 * Decides stored events again against edited bands. An event with a profile is re-classified
 * (and dropped when it no longer meets any band); one without (entered by hand) keeps its band
 * while that band exists, else takes the highest band its peak reached.
 */
export function reclassifyEvents(events: OverRevEvent[], bands: OverRevBandRule[]): OverRevEvent[] {
  const out: OverRevEvent[] = []
  for (const ev of events) {
    if (ev.profile) {
      const v = classifyExcursion(ev.profile, ev.peakRpm, bands)
      if (v) out.push({ ...ev, bandId: v.bandId, secondsAbove: v.secondsAbove })
      continue
    }
    if (bands.some((b) => b.id === ev.bandId)) {
      out.push(ev)
      continue
    }
    const reached = [...bands].sort((a, b) => a.minRpm - b.minRpm).filter((b) => b.minRpm <= ev.peakRpm)
    const top = reached[reached.length - 1]
    if (top) out.push({ ...ev, bandId: top.id })
  }
  return out
}

/**
 * Damage of the excursion in equivalent hours at the reference rpm with exponent p, and the part
 * of it beyond what the same time at the rev limit would have cost (exact to the 0.1 rpm profile).
 */
export function excursionDamage(
  profile: [number, number][],
  referenceRpm: number,
  revLimitRpm: number,
  exponent: number,
): { eqHours: number; extraEqHours: number } {
  let eq = 0
  let atLimit = 0
  for (const [level, sec] of profile) {
    const rpm = level / 10
    eq += sec * Math.pow(rpm / referenceRpm, exponent)
    atLimit += sec * Math.pow(Math.min(rpm, revLimitRpm) / referenceRpm, exponent)
  }
  return { eqHours: eq / 3600, extraEqHours: (eq - atLimit) / 3600 }
}
