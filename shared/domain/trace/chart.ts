// What the session page draws: the stored overview merged down to a size a browser charts
// quickly, keeping every bucket's lowest and highest value (a peak or a dip is never averaged
// away), and the over-rev and low oil pressure events as markers on the rpm and oil pressure charts.

import { OVERVIEW_CHANNELS, type ChannelRange, type TraceOverview } from './overview'

export interface ChartMarker {
  kind: 'over-rev' | 'low-oil-pressure'
  channel: 'rpm' | 'oilPressureBar'
  /** seconds from the first sample */
  startS: number
  endS: number
  /** the over-rev's peak rpm, or the lowest oil pressure in bar */
  value: number
  /** over-rev: its band id */
  bandId?: string
}

export interface TraceChart {
  overview: TraceOverview
  markers: ChartMarker[]
}

/** Buckets a session stores and the browser draws per chart: enough for a laptop-wide line, half the analyzer's, so a session row stays small (about 25 kB). */
export const CHART_BUCKETS = 300

/** The form a session stores: the analyzer's overview merged to CHART_BUCKETS. */
export function storedOverview(ov: TraceOverview): TraceOverview {
  return downsampleOverview(ov, CHART_BUCKETS)
}

const lower = (a: number | null, b: number | null) => (a === null ? b : b === null ? a : Math.min(a, b))
const higher = (a: number | null, b: number | null) => (a === null ? b : b === null ? a : Math.max(a, b))

/**
 * Merges runs of consecutive buckets so that at most `maxBuckets` remain: each kept bucket spans
 * its run's first t0 to last t1 and holds the lowest min and highest max of the run.
 */
export function downsampleOverview(ov: TraceOverview, maxBuckets: number): TraceOverview {
  if (!(maxBuckets >= 1)) throw new RangeError(`maxBuckets must be at least 1, got ${maxBuckets}`)
  const n = ov.t0.length
  const per = Math.max(1, Math.ceil(n / maxBuckets))
  const out: TraceOverview = { t0: [], t1: [], channels: {} as TraceOverview['channels'] }
  for (let i = 0; i < n; i += per) {
    out.t0.push(ov.t0[i]!)
    out.t1.push(ov.t1[Math.min(n, i + per) - 1]!)
  }
  for (const name of OVERVIEW_CHANNELS) {
    const src = ov.channels[name]
    if (!src) {
      out.channels[name] = null
      continue
    }
    const range: ChannelRange = { min: [], max: [] }
    for (let i = 0; i < n; i += per) {
      let mn: number | null = null
      let mx: number | null = null
      for (let k = i; k < Math.min(n, i + per); k++) {
        mn = lower(mn, src.min[k] ?? null)
        mx = higher(mx, src.max[k] ?? null)
      }
      range.min.push(mn)
      range.max.push(mx)
    }
    out.channels[name] = range
  }
  return out
}

/** The bucket whose span holds time s: the last one starting at or before it (the first when none does). */
function bucketAt(ov: TraceOverview, s: number): number {
  let lo = 0
  let hi = ov.t0.length - 1
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1
    if (ov.t0[mid]! <= s) lo = mid
    else hi = mid - 1
  }
  return lo
}

/**
 * The chart of a session: the overview down to `maxBuckets`, and one marker per event, none
 * dropped however many share a bucket. The bucket that holds an event's extreme shows it: an
 * over-rev's peak raises its rpm maximum, a low oil pressure's minimum lowers its pressure
 * minimum, where no bucket the event spans already reaches it (an overview stored before channels
 * were kept, or coarser than the event): then the bucket where the event starts is widened.
 */
export function traceChart(
  ov: TraceOverview,
  events: { overRevs: { startS: number; durationS: number; peakRpm: number; bandId: string }[]; lowOilPressure: { startS: number; durationS: number; minBar: number }[] },
  maxBuckets: number,
): TraceChart {
  const overview = downsampleOverview(ov, maxBuckets)
  const markers: ChartMarker[] = [
    ...events.overRevs.map((e) => ({ kind: 'over-rev' as const, channel: 'rpm' as const, startS: e.startS, endS: e.startS + e.durationS, value: e.peakRpm, bandId: e.bandId })),
    ...events.lowOilPressure.map((e) => ({ kind: 'low-oil-pressure' as const, channel: 'oilPressureBar' as const, startS: e.startS, endS: e.startS + e.durationS, value: e.minBar })),
  ].sort((a, b) => a.startS - b.startS)
  if (overview.t0.length) {
    for (const m of markers) {
      const range = overview.channels[m.channel]
      if (!range) continue
      const first = bucketAt(overview, m.startS)
      const last = bucketAt(overview, m.endS)
      let reached = false
      for (let i = first; i <= last && !reached; i++) {
        reached = m.kind === 'over-rev' ? (range.max[i] ?? -Infinity) >= m.value : (range.min[i] ?? Infinity) <= m.value
      }
      if (reached) continue
      if (m.kind === 'over-rev') range.max[first] = m.value
      else range.min[first] = m.value
    }
  }
  return { overview, markers }
}

/** The overview a session stored before channels were kept: its rpm points, one per bucket. */
export function overviewFromRpmPoints(points: { t: number; rpm: number }[]): TraceOverview {
  const rpm = points.map((p) => p.rpm)
  const channels = { rpm: points.length ? { min: [...rpm], max: [...rpm] } : null, oilTempC: null, oilPressureBar: null, waterTempC: null, speedKmh: null }
  return { t0: points.map((p) => p.t), t1: points.map((p) => p.t), channels }
}
