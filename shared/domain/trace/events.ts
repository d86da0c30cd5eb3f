// The events a trace records when they close: over-rev excursions (with their time-at-rpm
// profile, judged against the bands) and runs of low oil pressure.

import { DURATION_EPSILON_S, classifyExcursion, profileLevel, type OverRevBandRule, type OverRevEvent } from '../over-rev'
import type { LowOilPressureEvent } from './types'

/** Distinct 0.1 rpm levels kept per over-rev profile; a longer excursion is merged to whole rpm. */
const MAX_PROFILE_LEVELS = 4000

/** The open excursion's time per 0.1 rpm level, and the events of the closed ones. */
export class OverRevExcursions {
  readonly events: OverRevEvent[] = []
  private readonly bands: OverRevBandRule[]
  private profile = new Map<number, number>()

  /** `bands` sorted by minRpm */
  constructor(bands: OverRevBandRule[]) {
    this.bands = bands
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
    this.events.push({ bandId: verdict.bandId, startS: startT - firstT, durationS: endT - startT, peakRpm, secondsAbove: verdict.secondsAbove, profile })
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
