// The summary of a finished trace: what each part gathered, the distance by its source, and
// maxima that stay null when their channel never had a value.

import type { RpmMomentsAccumulator } from '../rpm-moments'
import type { LowOilPressureRuns, OverRevExcursions } from './events'
import type { OverviewBuckets } from './overview'
import type { BandHistogram, GapLog } from './running-time'
import type { TraceConfig, TraceSummary } from './types'

/** The per-sample figures, -Infinity / Infinity where a channel never had a value. */
export interface TraceTotals {
  samples: number
  firstT: number
  lastT: number
  /** the trapezoid sum of the speed channel */
  speedDistanceKm: number
  maxRpm: number
  maxOilTemp: number
  maxWaterTemp: number
  maxSpeed: number
  minOilPressure: number
}

export interface TraceParts {
  histogram: BandHistogram
  moments: RpmMomentsAccumulator
  overRevs: OverRevExcursions
  lowOil: LowOilPressureRuns
  gaps: GapLog
  overview: OverviewBuckets
}

/** The speed channel when the trace had one, else laps times the track length, else none. */
function distanceOf(cfg: TraceConfig, totals: TraceTotals): Pick<TraceSummary, 'distanceKm' | 'distanceSource'> {
  if (totals.maxSpeed !== -Infinity) return { distanceKm: totals.speedDistanceKm, distanceSource: 'speed' }
  if (cfg.laps !== null && cfg.trackLengthKm !== null) return { distanceKm: cfg.laps * cfg.trackLengthKm, distanceSource: 'laps' }
  return { distanceKm: 0, distanceSource: 'none' }
}

export function summarize(cfg: TraceConfig, totals: TraceTotals, parts: TraceParts): TraceSummary {
  const { samples, firstT } = totals
  const { distanceKm, distanceSource } = distanceOf(cfg, totals)
  return {
    samples,
    firstSampleT: samples > 0 ? firstT : 0,
    durationS: samples > 0 ? totals.lastT - firstT : 0,
    runningSeconds: parts.histogram.runningSeconds,
    distanceKm,
    distanceSource,
    histogram: [...parts.histogram.seconds],
    rpmMoments: parts.moments.result(),
    overRevs: [...parts.overRevs.events],
    lowOilPressure: [...parts.lowOil.events],
    gaps: [...parts.gaps.listed],
    gapCount: parts.gaps.count,
    gapSeconds: parts.gaps.seconds,
    maxRpm: totals.maxRpm,
    maxOilTempC: totals.maxOilTemp === -Infinity ? null : totals.maxOilTemp,
    maxWaterTempC: totals.maxWaterTemp === -Infinity ? null : totals.maxWaterTemp,
    maxSpeedKmh: totals.maxSpeed === -Infinity ? null : totals.maxSpeed,
    minOilPressureBar: totals.minOilPressure === Infinity ? null : totals.minOilPressure,
    overview: parts.overview.points(firstT),
    channels: parts.overview.ranges(firstT),
  }
}
