// Fast usage over installation windows: one engine's sessions in time order with prefix sums of
// hours, km and equivalent hours (per damage exponent), so a part's usage over any window costs
// O(1) plus the few sessions that carry over-revs. Gives the same answer as accumulateUsage over
// the window's sessions (tested), which stays the reference definition.
import {
  addSession,
  sessionEquivalentHours,
  type AccumulateOptions,
  type ComponentLimits,
  type EngineTypeLifeConfig,
  type PartUsage,
  type SessionUsage,
} from './life'

export type IndexedSession = SessionUsage

export interface UsageIndex {
  /** Index of the first session at or after time t (ms), in time order. */
  lowerBound(t: number): number
  /** Usage of sessions [from, to) of this engine (indexes from lowerBound). */
  usage(from: number, to: number, limits: ComponentLimits, opts?: AccumulateOptions): PartUsage
  readonly sessions: readonly IndexedSession[]
}

const SECONDS_PER_HOUR = 3600

export function createUsageIndex(sessionsInOrder: IndexedSession[], cfg: EngineTypeLifeConfig): UsageIndex {
  const n = sessionsInOrder.length
  const times = new Float64Array(n)
  const hours = new Float64Array(n + 1)
  const km = new Float64Array(n + 1)
  const withOverRevs: number[] = []
  for (let i = 0; i < n; i++) {
    const s = sessionsInOrder[i]!
    times[i] = Date.parse(s.at)
    if (i > 0 && times[i]! < times[i - 1]!) throw new RangeError('sessions must be in time order')
    hours[i + 1] = hours[i]! + s.runningSeconds / SECONDS_PER_HOUR
    km[i + 1] = km[i]! + s.distanceKm
    if (s.overRevs.length > 0) withOverRevs.push(i)
  }
  const eqByExponent = new Map<number, Float64Array>()
  const eqPrefix = (p: number) => {
    let prefix = eqByExponent.get(p)
    if (!prefix) {
      prefix = new Float64Array(n + 1)
      for (let i = 0; i < n; i++) {
        const s = sessionsInOrder[i]!
        prefix[i + 1] = prefix[i]! + sessionEquivalentHours(s, cfg, p)
      }
      eqByExponent.set(p, prefix)
    }
    return prefix
  }

  return {
    sessions: sessionsInOrder,
    lowerBound(t: number) {
      let lo = 0
      let hi = n
      while (lo < hi) {
        const mid = (lo + hi) >> 1
        if (times[mid]! < t) lo = mid + 1
        else hi = mid
      }
      return lo
    },
    usage(from: number, to: number, limits: ComponentLimits, opts: AccumulateOptions = {}) {
      const eq = eqPrefix(limits.damageExponent)
      // Over-rev counting and the inspection flag reuse the reference rules on the few sessions that have events.
      let overRevs: PartUsage = { hours: 0, km: 0, eqHours: 0, overRevCounts: {}, sessions: 0, immediateInspection: false }
      for (const i of withOverRevs) {
        if (i < from || i >= to) continue
        const s = sessionsInOrder[i]!
        overRevs = addSession(overRevs, { ...s, runningSeconds: 0, distanceKm: 0, histogram: [], rpmMoments: null }, cfg, limits, opts)
      }
      return {
        hours: hours[to]! - hours[from]!,
        km: km[to]! - km[from]!,
        eqHours: eq[to]! - eq[from]!,
        overRevCounts: overRevs.overRevCounts,
        sessions: Math.max(0, to - from),
        immediateInspection: overRevs.immediateInspection,
      }
    },
  }
}
