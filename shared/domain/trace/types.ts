// The trace analysis' inputs and answer (see ../trace.ts for the analyzer and its rules).

import type { OverRevBandRule, OverRevEvent } from '../over-rev'
import type { RpmMoments } from '../rpm-moments'
import type { TraceOverview } from './overview'

export type OverRevBandConfig = OverRevBandRule
export type { OverRevEvent }

export interface TraceConfig {
  /** running means rpm strictly above this */
  idleRpm: number
  bandWidthRpm: number
  /** a time step longer than this is not counted and is reported */
  maxGapS: number
  overRevBands: OverRevBandConfig[]
  lowOilPressure: { belowBar: number; aboveRpm: number; minDurationS: number }
  trackLengthKm: number | null
  laps: number | null
}

export interface TraceSample {
  /** s */
  t: number
  rpm: number
  speedKmh?: number
  oilTempC?: number
  oilPressureBar?: number
  waterTempC?: number
  throttlePct?: number
  gear?: number
}

export interface LowOilPressureEvent {
  startS: number
  durationS: number
  minBar: number
}

export interface TraceGap {
  atS: number
  seconds: number
}

/** Times in a summary (startS, atS, overview t) count from the first sample. */
export interface TraceSummary {
  samples: number
  /** time of the first sample as pushed, to find an event in the original file */
  firstSampleT: number
  /** last sample time minus first, gaps included */
  durationS: number
  runningSeconds: number
  distanceKm: number
  distanceSource: 'speed' | 'laps' | 'none'
  /** seconds per band; band i covers [i*bandWidth, (i+1)*bandWidth); only running time counts */
  histogram: number[]
  /** running time by ln(rpm) moments: equivalent hours for any exponent and reference rpm */
  rpmMoments: RpmMoments
  overRevs: OverRevEvent[]
  lowOilPressure: LowOilPressureEvent[]
  /** the first MAX_LISTED_GAPS gaps; gapCount and gapSeconds cover all of them */
  gaps: TraceGap[]
  gapCount: number
  gapSeconds: number
  maxRpm: number
  maxOilTempC: number | null
  maxWaterTempC: number | null
  maxSpeedKmh: number | null
  /** only while running */
  minOilPressureBar: number | null
  /** at most OVERVIEW_MAX_POINTS points, each the highest rpm of its bucket so peaks show */
  overview: { t: number; rpm: number }[]
  /** per overview bucket: its time span and every channel's lowest and highest value */
  channels: TraceOverview
}

/**
 * Samples in columns, NaN for an absent value: the import path fills one block per chunk of
 * rows and hands it over in one call, so no number is boxed on its way into the analyzer.
 */
export interface TraceBlock {
  t: Float64Array
  rpm: Float64Array
  speedKmh: Float64Array
  oilTempC: Float64Array
  oilPressureBar: Float64Array
  waterTempC: Float64Array
}

export function createTraceBlock(capacity: number): TraceBlock {
  return {
    t: new Float64Array(capacity),
    rpm: new Float64Array(capacity),
    speedKmh: new Float64Array(capacity),
    oilTempC: new Float64Array(capacity),
    oilPressureBar: new Float64Array(capacity),
    waterTempC: new Float64Array(capacity),
  }
}

export interface TraceAnalyzer {
  /** Copies what it needs: the caller may reuse one sample object for every push. */
  push(s: TraceSample): void
  /** push() with plain numbers, NaN for an absent channel: no object per sample. */
  pushValues(t: number, rpm: number, speedKmh: number, oilTempC: number, oilPressureBar: number, waterTempC: number): void
  /**
   * The first `count` samples of the block, in order. A block with an invalid sample
   * (time not finite or not increasing, rpm out of range) is refused whole with a
   * RangeError and changes nothing; the caller may reuse the block afterwards.
   */
  pushBlock(block: TraceBlock, count: number): void
  finish(): TraceSummary
}

/** Above any engine's rev range; keeps a corrupt value from sizing the histogram. */
export const TRACE_MAX_RPM = 100_000
/** Above any vehicle's speed in any unit the reader accepts (km/h or mph): a cell past it is unreadable. */
export const TRACE_MAX_SPEED = 1000
