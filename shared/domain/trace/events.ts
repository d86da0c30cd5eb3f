// The events a trace records when they close: over-rev excursions (with their time-at-rpm
// profile, judged against the bands) and runs of low oil pressure.

import { DURATION_EPSILON_S, classifyExcursion, profileLevel, type OverRevBandRule, type OverRevEvent } from '../over-rev'
import type { LowOilPressureEvent } from './types'

/** Distinct 0.1 rpm levels kept per over-rev profile; a longer excursion is merged to whole rpm. */
const MAX_PROFILE_LEVELS = 4000

/**
 * The events of one session as JSON stay within this many bytes (well under the database's 16 MiB
 * packet). Profiles only serve deciding the events again after a band edit: when the events with
 * their profiles would pass the budget, every event keeps its verdict and its time above each band
 * but no profile; past the budget even without them, the file is refused (the import's call).
 */
export const OVER_REV_JSON_BUDGET = 4 << 20

/** The open excursion's time per 0.1 rpm level, and the events of the closed ones. */
export class OverRevExcursions {
  readonly events: OverRevEvent[] = []
  /** true once the events with their profiles passed the budget: no event keeps its profile */
  profilesDropped = false
  private readonly bands: OverRevBandRule[]
  private readonly budgetBytes: number
  /** length of JSON.stringify(events) with profiles, while they are kept */
  private jsonBytes = 2
  private profile = new Map<number, number>()

  /** `bands` sorted by minRpm */
  constructor(bands: OverRevBandRule[], budgetBytes = OVER_REV_JSON_BUDGET) {
    this.bands = bands
    this.budgetBytes = budgetBytes
  }

  /** A step of `dt` at `rpm` inside the open excursion. */
  addStep(rpm: number, dt: number): void {
    const level = profileLevel(rpm)
    const p = this.profile
    p.set(level, (p.get(level) ?? 0) + dt)
    if (p.size > MAX_PROFILE_LEVELS) {
      // Whole rpm keeps every whole-rpm threshold exact; only the damage figure coarsens.
      const merged = new Map<number, number>()
      for (const [l, s] of p) merged.set(l - (l % 10), (merged.get(l - (l % 10)) ?? 0) + s)
      this.profile = merged
    }
  }

  /** Closes the open excursion: an event when it met a band, nothing otherwise. */
  close(startT: number, endT: number, peakRpm: number, firstT: number): void {
    const profile = [...this.profile.entries()].sort((a, b) => b[0] - a[0])
    this.profile = new Map()
    const verdict = classifyExcursion(profile, peakRpm, this.bands)
    if (!verdict) return
    const event: OverRevEvent = { bandId: verdict.bandId, startS: startT - firstT, durationS: endT - startT, peakRpm, secondsAbove: verdict.secondsAbove }
    if (!this.profilesDropped) {
      event.profile = profile
      // Dropped as soon as the budget is passed, so that a trace above the thresholds for hours
      // does not hold thousands of profiles in memory until its end.
      this.jsonBytes += JSON.stringify(event).length + (this.events.length ? 1 : 0)
      if (this.jsonBytes > this.budgetBytes) {
        this.profilesDropped = true
        delete event.profile
        for (const e of this.events) delete e.profile
      }
    }
    this.events.push(event)
  }
}

/** Runs of low oil pressure, kept when they last at least the minimum duration. */
export class LowOilPressureRuns {
  readonly events: LowOilPressureEvent[] = []
  private readonly minDurationS: number

  constructor(minDurationS: number) {
    this.minDurationS = minDurationS
  }

  close(startT: number, endT: number, minBar: number, firstT: number): void {
    const duration = endT - startT
    // decimal timestamps (0.1 + 0.2) must not drop a run that lasts exactly the minimum
    if (duration + DURATION_EPSILON_S >= this.minDurationS) {
      this.events.push({ startS: startT - firstT, durationS: duration, minBar })
    }
  }
}
