// Trace analysis: turns a stream of logger samples into the figures a session records
// (running time, rev histogram, distance, over-rev and low oil pressure events, maxima).
// Pure and streaming: constant memory in the number of samples, no clock, no I/O.
//
// Every figure here is an aid to the supplier's service instructions, inspection and
// licensed practice, never a substitute for them. A logger trace can miss events
// (sample rate, dropped channels, gaps): a suspected over-rev is inspected, not argued.
//
// Time step rule: the interval between sample k-1 and sample k is attributed to the
// state of sample k-1 (its rpm band, running or not, inside an event or not), the way a
// sample-and-hold logger channel behaves. The last sample therefore adds no time.
// A step longer than maxGapS (logger dropout, file spliced from two runs) is not
// counted anywhere and is reported in `gaps`; an event open before it ends at the
// sample before the gap.

import { classifyExcursion, profileLevel, type OverRevBandRule, type OverRevEvent } from './over-rev'
import { RpmMomentsAccumulator, type RpmMoments } from './rpm-moments'

export type OverRevBandConfig = OverRevBandRule

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

export type { OverRevEvent }

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
export const OVERVIEW_MAX_POINTS = 600
export const MAX_LISTED_GAPS = 1000
/** Decimal timestamps (0.1 + 0.2) must not drop an event that lasts exactly minDurationS. */
const DURATION_EPSILON_S = 1e-9
/** Distinct 0.1 rpm levels kept per over-rev profile; a longer excursion is merged to whole rpm. */
const MAX_PROFILE_LEVELS = 4000

export class TraceConfigError extends RangeError {}

function requireFinite(name: string, v: number, min: number): void {
  if (!Number.isFinite(v) || v < min) throw new TraceConfigError(`${name} must be a number >= ${min}, got ${v}`)
}

export function validateTraceConfig(cfg: TraceConfig): void {
  requireFinite('idleRpm', cfg.idleRpm, 0)
  requireFinite('bandWidthRpm', cfg.bandWidthRpm, Number.MIN_VALUE)
  requireFinite('maxGapS', cfg.maxGapS, Number.MIN_VALUE)
  for (const b of cfg.overRevBands) {
    requireFinite(`overRevBands[${b.id}].minRpm`, b.minRpm, 0)
    requireFinite(`overRevBands[${b.id}].minDurationS`, b.minDurationS, 0)
    requireFinite(`overRevBands[${b.id}].hysteresisRpm`, b.hysteresisRpm, 0)
  }
  const ids = new Set(cfg.overRevBands.map((b) => b.id))
  if (ids.size !== cfg.overRevBands.length) throw new TraceConfigError('overRevBands ids must be unique')
  requireFinite('lowOilPressure.belowBar', cfg.lowOilPressure.belowBar, -Infinity)
  requireFinite('lowOilPressure.aboveRpm', cfg.lowOilPressure.aboveRpm, 0)
  requireFinite('lowOilPressure.minDurationS', cfg.lowOilPressure.minDurationS, 0)
  if (cfg.trackLengthKm !== null) requireFinite('trackLengthKm', cfg.trackLengthKm, 0)
  if (cfg.laps !== null) requireFinite('laps', cfg.laps, 0)
}

/**
 * Over-rev rule (see over-rev.ts): an excursion starts at the first sample with rpm >= the
 * lowest band's minRpm and ends at the first sample with rpm < (lowest band minRpm - its
 * hysteresisRpm), so chatter around the threshold counts once. The excursion is one event,
 * assigned to the highest band whose minRpm its peak reached and whose minDurationS the time
 * spent at or above that minRpm met; if it met no band's minDurationS it is not an event.
 * Low oil pressure: a run of samples with pressure < belowBar while rpm > aboveRpm, kept when
 * it lasts at least minDurationS; a sample without a pressure value ends the run.
 */
export function createTraceAnalyzer(cfg: TraceConfig): TraceAnalyzer {
  return new TraceAnalyzerCore(cfg)
}

// The state lives in fields between blocks and in locals within one: the loop then keeps
// every number in a register, with no object shape for V8 to re-check after each call.
class TraceAnalyzerCore implements TraceAnalyzer {
  private readonly cfg: TraceConfig
  private readonly bands: OverRevBandConfig[]
  private readonly idleRpm: number
  private readonly bandWidth: number
  private readonly maxGap: number
  private readonly hasBands: boolean
  private readonly enterRpm: number
  private readonly exitRpm: number
  private readonly lopBelow: number
  private readonly lopAbove: number
  private readonly lopMinDuration: number
  private readonly single = createTraceBlock(1)

  // Fields read only once a sample has set them start as NaN, so V8 holds them as
  // doubles from the start instead of changing the object's shape on the first fraction.
  private samples = 0
  private firstT = NaN
  private prevT = NaN
  private prevSpeed = NaN

  // Histogram by segments of consecutive steps in one band: one subtraction per segment
  // keeps sums exact for decimal timestamps (no drift from adding 0.01 a million times).
  private readonly histogram: number[] = []
  private segBand = -1 // -1: not running
  private segStart = NaN
  private runningSeconds = 0
  private readonly moments = new RpmMomentsAccumulator(TRACE_MAX_RPM)
  private prevRpm = NaN

  private distanceKm = 0

  private readonly gaps: TraceGap[] = []
  private gapCount = 0
  private gapSeconds = 0

  private readonly overRevs: OverRevEvent[] = []
  /** time of the open excursion per 0.1 rpm level */
  private orProfile = new Map<number, number>()
  private orOpen = false
  private orStart = NaN
  private orPeak = NaN

  private readonly lowOil: LowOilPressureEvent[] = []
  private lopOpen = false
  private lopStart = NaN
  private lopMin = NaN

  private maxRpm = 0
  private maxOilTemp = -Infinity
  private maxWaterTemp = -Infinity
  private maxSpeed = -Infinity
  private minOilPressure = Infinity

  // Overview: buckets of `bucketSize` samples; when full, pairs merge and the size doubles.
  private readonly ovT: number[] = []
  private readonly ovRpm: number[] = []
  private bucketSize = 1
  private bucketCount = 0
  private bucketMax = -1
  private bucketT = NaN

  constructor(cfg: TraceConfig) {
    validateTraceConfig(cfg)
    this.cfg = cfg
    this.bands = [...cfg.overRevBands].sort((a, b) => a.minRpm - b.minRpm)
    this.idleRpm = cfg.idleRpm
    this.bandWidth = cfg.bandWidthRpm
    this.maxGap = cfg.maxGapS
    this.hasBands = this.bands.length > 0
    const low = this.bands[0]
    this.enterRpm = low ? low.minRpm : Infinity
    this.exitRpm = low ? low.minRpm - low.hysteresisRpm : Infinity
    this.lopBelow = cfg.lowOilPressure.belowBar
    this.lopAbove = cfg.lowOilPressure.aboveRpm
    this.lopMinDuration = cfg.lowOilPressure.minDurationS
  }

  push(s: TraceSample): void {
    this.pushValues(s.t, s.rpm, s.speedKmh ?? NaN, s.oilTempC ?? NaN, s.oilPressureBar ?? NaN, s.waterTempC ?? NaN)
  }

  pushValues(t: number, rpm: number, speed: number, oilTemp: number, oilPressure: number, waterTemp: number): void {
    const b = this.single
    b.t[0] = t
    b.rpm[0] = rpm
    b.speedKmh[0] = speed
    b.oilTempC[0] = oilTemp
    b.oilPressureBar[0] = oilPressure
    b.waterTempC[0] = waterTemp
    this.pushBlock(b, 1)
  }

  pushBlock(block: TraceBlock, count: number): void {
    const T = block.t
    const RPM = block.rpm
    const SPEED = block.speedKmh
    const OIL_T = block.oilTempC
    const OIL_P = block.oilPressureBar
    const WATER_T = block.waterTempC
    if (count > T.length) throw new RangeError(`count ${count} is larger than the block (${T.length})`)
    this.checkBlock(T, RPM, count)

    const idleRpm = this.idleRpm
    const bandWidth = this.bandWidth
    const maxGap = this.maxGap
    const hasBands = this.hasBands
    const enterRpm = this.enterRpm
    const exitRpm = this.exitRpm
    const lopBelow = this.lopBelow
    const lopAbove = this.lopAbove
    const moments = this.moments
    let samples = this.samples
    let prevT = this.prevT
    let prevRpm = this.prevRpm
    let prevSpeed = this.prevSpeed
    let segBand = this.segBand
    let segStart = this.segStart
    let distanceKm = this.distanceKm
    let orOpen = this.orOpen
    let orStart = this.orStart
    let orPeak = this.orPeak
    let lopOpen = this.lopOpen
    let lopStart = this.lopStart
    let lopMin = this.lopMin
    let maxRpm = this.maxRpm
    let maxSpeed = this.maxSpeed
    let maxOilTemp = this.maxOilTemp
    let maxWaterTemp = this.maxWaterTemp
    let minOilPressure = this.minOilPressure
    let bucketSize = this.bucketSize
    let bucketCount = this.bucketCount
    let bucketMax = this.bucketMax
    let bucketT = this.bucketT

    for (let i = 0; i < count; i++) {
      const t = T[i]!
      const rpm = RPM[i]!
      const speed = SPEED[i]!
      const oilPressure = OIL_P[i]!
      const hasSpeed = speed === speed
      const band = rpm > idleRpm ? Math.floor(rpm / bandWidth) : -1

      if (samples === 0) {
        this.firstT = t
        segBand = band
        segStart = t
      } else {
        const dt = t - prevT
        if (dt > maxGap) {
          // the gap counts nowhere: whatever was open ends at the sample before it
          this.recordGap(prevT, dt)
          this.addSegment(segBand, segStart, prevT)
          segBand = band
          segStart = t
          if (orOpen) this.recordOverRev(orStart, prevT, orPeak)
          if (lopOpen) this.recordLowOil(lopStart, prevT, lopMin)
          orOpen = false
          lopOpen = false
        } else {
          if (band !== segBand) {
            this.addSegment(segBand, segStart, t)
            segBand = band
            segStart = t
          }
          // the step takes the rpm of the sample that starts it, as the histogram does
          if (prevRpm > idleRpm) moments.add(prevRpm, dt)
          if (orOpen) this.addExcursionStep(prevRpm, dt)
          // trapezoid; with one end missing, hold the known value
          if (hasSpeed || prevSpeed === prevSpeed) {
            const a = prevSpeed === prevSpeed ? prevSpeed : speed
            const b = hasSpeed ? speed : prevSpeed
            distanceKm += ((a + b) * 0.5 * dt) / 3600
          }
        }
      }

      if (hasBands) {
        if (orOpen) {
          if (rpm < exitRpm) {
            this.recordOverRev(orStart, t, orPeak)
            orOpen = false
          } else if (rpm > orPeak) orPeak = rpm
        }
        if (!orOpen && rpm >= enterRpm) {
          orOpen = true
          orStart = t
          orPeak = rpm
        }
      }

      const lowNow = oilPressure < lopBelow && rpm > lopAbove // false for NaN
      if (lopOpen) {
        if (!lowNow) {
          this.recordLowOil(lopStart, t, lopMin)
          lopOpen = false
        } else if (oilPressure < lopMin) lopMin = oilPressure
      }
      if (!lopOpen && lowNow) {
        lopOpen = true
        lopStart = t
        lopMin = oilPressure
      }

      if (rpm > maxRpm) maxRpm = rpm
      if (speed > maxSpeed) maxSpeed = speed // false for NaN
      const oilTemp = OIL_T[i]!
      if (oilTemp > maxOilTemp) maxOilTemp = oilTemp
      const waterTemp = WATER_T[i]!
      if (waterTemp > maxWaterTemp) maxWaterTemp = waterTemp
      if (band >= 0 && oilPressure < minOilPressure) minOilPressure = oilPressure

      if (rpm > bucketMax) {
        bucketMax = rpm
        bucketT = t
      }
      if (++bucketCount >= bucketSize) {
        bucketSize = this.addOverviewPoint(bucketT, bucketMax)
        bucketCount = 0
        bucketMax = -1
      }

      samples++
      prevT = t
      prevRpm = rpm
      prevSpeed = speed
    }

    this.samples = samples
    this.prevT = prevT
    this.prevRpm = prevRpm
    this.prevSpeed = prevSpeed
    this.segBand = segBand
    this.segStart = segStart
    this.distanceKm = distanceKm
    this.orOpen = orOpen
    this.orStart = orStart
    this.orPeak = orPeak
    this.lopOpen = lopOpen
    this.lopStart = lopStart
    this.lopMin = lopMin
    this.maxRpm = maxRpm
    this.maxSpeed = maxSpeed
    this.maxOilTemp = maxOilTemp
    this.maxWaterTemp = maxWaterTemp
    this.minOilPressure = minOilPressure
    this.bucketCount = bucketCount
    this.bucketMax = bucketMax
    this.bucketT = bucketT
  }

  /** Refuses the whole block before any state changes. */
  private checkBlock(T: Float64Array, RPM: Float64Array, count: number): void {
    let prevT = this.samples > 0 ? this.prevT : -Infinity
    for (let i = 0; i < count; i++) {
      const t = T[i]!
      const rpm = RPM[i]!
      if (!(t > prevT && t < Infinity)) {
        if (!Number.isFinite(t)) throw new RangeError(`sample time must be finite, got ${t}`)
        throw new RangeError(`sample times must increase: ${t} after ${prevT}`)
      }
      if (!(rpm >= 0 && rpm <= TRACE_MAX_RPM)) throw new RangeError(`rpm must be within 0..${TRACE_MAX_RPM}, got ${rpm}`)
      prevT = t
    }
  }

  finish(): TraceSummary {
    if (this.samples > 0) {
      const endT = this.prevT
      this.addSegment(this.segBand, this.segStart, endT)
      this.segBand = -1
      if (this.orOpen) this.recordOverRev(this.orStart, endT, this.orPeak)
      if (this.lopOpen) this.recordLowOil(this.lopStart, endT, this.lopMin)
      this.orOpen = false
      this.lopOpen = false
      if (this.bucketCount > 0) {
        this.ovT.push(this.bucketT)
        this.ovRpm.push(this.bucketMax)
        this.bucketCount = 0
      }
    }
    const cfg = this.cfg
    let distance = 0
    let source: TraceSummary['distanceSource'] = 'none'
    if (this.maxSpeed !== -Infinity) {
      distance = this.distanceKm
      source = 'speed'
    } else if (cfg.laps !== null && cfg.trackLengthKm !== null) {
      distance = cfg.laps * cfg.trackLengthKm
      source = 'laps'
    }
    const firstT = this.firstT
    return {
      samples: this.samples,
      firstSampleT: this.samples > 0 ? firstT : 0,
      durationS: this.samples > 0 ? this.prevT - firstT : 0,
      runningSeconds: this.runningSeconds,
      distanceKm: distance,
      distanceSource: source,
      histogram: [...this.histogram],
      rpmMoments: this.moments.result(),
      overRevs: [...this.overRevs],
      lowOilPressure: [...this.lowOil],
      gaps: [...this.gaps],
      gapCount: this.gapCount,
      gapSeconds: this.gapSeconds,
      maxRpm: this.maxRpm,
      maxOilTempC: this.maxOilTemp === -Infinity ? null : this.maxOilTemp,
      maxWaterTempC: this.maxWaterTemp === -Infinity ? null : this.maxWaterTemp,
      maxSpeedKmh: this.maxSpeed === -Infinity ? null : this.maxSpeed,
      minOilPressureBar: this.minOilPressure === Infinity ? null : this.minOilPressure,
      overview: this.ovT.map((t, i) => ({ t: t - firstT, rpm: this.ovRpm[i]! })),
    }
  }

  private recordGap(atT: number, seconds: number): void {
    this.gapCount++
    this.gapSeconds += seconds
    if (this.gaps.length < MAX_LISTED_GAPS) this.gaps.push({ atS: atT - this.firstT, seconds })
  }

  private addSegment(band: number, startT: number, untilT: number): void {
    const dt = untilT - startT
    // a zero-length segment (the last sample's band) must not lengthen the histogram
    if (band >= 0 && dt > 0) {
      const h = this.histogram
      while (h.length <= band) h.push(0)
      h[band]! += dt
      this.runningSeconds += dt
    }
  }

  private addExcursionStep(rpm: number, dt: number): void {
    const level = profileLevel(rpm)
    const p = this.orProfile
    p.set(level, (p.get(level) ?? 0) + dt)
    if (p.size > MAX_PROFILE_LEVELS) {
      // Whole rpm keeps every whole-rpm threshold exact; only the damage figure coarsens.
      const merged = new Map<number, number>()
      for (const [l, s] of p) merged.set(l - (l % 10), (merged.get(l - (l % 10)) ?? 0) + s)
      this.orProfile = merged
    }
  }

  private recordOverRev(startT: number, endT: number, peakRpm: number): void {
    const profile = [...this.orProfile.entries()].sort((a, b) => b[0] - a[0])
    this.orProfile = new Map()
    const verdict = classifyExcursion(profile, peakRpm, this.bands)
    if (!verdict) return
    this.overRevs.push({ bandId: verdict.bandId, startS: startT - this.firstT, durationS: endT - startT, peakRpm, secondsAbove: verdict.secondsAbove, profile })
  }

  private recordLowOil(startT: number, endT: number, minBar: number): void {
    const duration = endT - startT
    if (duration + DURATION_EPSILON_S >= this.lopMinDuration) {
      this.lowOil.push({ startS: startT - this.firstT, durationS: duration, minBar })
    }
  }

  /** Closes a bucket; returns the bucket size from now on (doubled when pairs merged). */
  private addOverviewPoint(t: number, rpm: number): number {
    const ovT = this.ovT
    const ovRpm = this.ovRpm
    ovT.push(t)
    ovRpm.push(rpm)
    if (ovT.length >= OVERVIEW_MAX_POINTS) {
      const half = ovT.length >> 1
      for (let i = 0; i < half; i++) {
        const a = 2 * i
        const k = ovRpm[a + 1]! > ovRpm[a]! ? a + 1 : a
        ovT[i] = ovT[k]!
        ovRpm[i] = ovRpm[k]!
      }
      ovT.length = half
      ovRpm.length = half
      this.bucketSize *= 2
    }
    return this.bucketSize
  }
}

/** Convenience for tests and small traces already in memory. */
export function analyzeTrace(cfg: TraceConfig, samples: Iterable<TraceSample>): TraceSummary {
  const a = createTraceAnalyzer(cfg)
  for (const s of samples) a.push(s)
  return a.finish()
}
