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
//
// The per-sample loop is here (pushBlock); what each figure does with a step or a closed
// event is in trace/: running time and gaps, over-rev and low oil pressure events, the
// overview buckets, the summary.

import { RpmMomentsAccumulator } from './rpm-moments'
import { validateTraceConfig } from './trace/config'
import { LowOilPressureRuns, OverRevExcursions } from './trace/events'
import { OverviewBuckets } from './trace/overview'
import { BandHistogram, GapLog } from './trace/running-time'
import { summarize } from './trace/summary'
import { TRACE_MAX_RPM, createTraceBlock, type OverRevBandConfig, type TraceAnalyzer, type TraceBlock, type TraceConfig, type TraceSample, type TraceSummary } from './trace/types'

export { TraceConfigError, validateTraceConfig } from './trace/config'
export { OVERVIEW_CHANNELS, OVERVIEW_MAX_POINTS, type ChannelRange, type OverviewChannel, type TraceOverview } from './trace/overview'
export { MAX_LISTED_GAPS } from './trace/running-time'
export {
  TRACE_MAX_RPM,
  TRACE_MAX_SPEED,
  createTraceBlock,
  type LowOilPressureEvent,
  type OverRevBandConfig,
  type OverRevEvent,
  type TraceAnalyzer,
  type TraceBlock,
  type TraceConfig,
  type TraceGap,
  type TraceSample,
  type TraceSummary,
} from './trace/types'

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
  private readonly idleRpm: number
  private readonly bandWidth: number
  private readonly maxGap: number
  private readonly hasBands: boolean
  private readonly enterRpm: number
  private readonly exitRpm: number
  private readonly lopBelow: number
  private readonly lopAbove: number
  private readonly single = createTraceBlock(1)

  private readonly histogram = new BandHistogram()
  private readonly moments = new RpmMomentsAccumulator(TRACE_MAX_RPM)
  private readonly gaps = new GapLog()
  private readonly overRevs: OverRevExcursions
  private readonly lowOil: LowOilPressureRuns
  private readonly overview = new OverviewBuckets()

  // Fields read only once a sample has set them start as NaN, so V8 holds them as
  // doubles from the start instead of changing the object's shape on the first fraction.
  private samples = 0
  private firstT = NaN
  private prevT = NaN
  private prevSpeed = NaN
  private prevRpm = NaN

  // the histogram segment under way
  private segBand = -1 // -1: not running
  private segStart = NaN

  private distanceKm = 0

  // the open over-rev excursion
  private orOpen = false
  private orStart = NaN
  private orPeak = NaN

  // the open low oil pressure run
  private lopOpen = false
  private lopStart = NaN
  private lopMin = NaN

  private maxRpm = 0
  private maxOilTemp = -Infinity
  private maxWaterTemp = -Infinity
  private maxSpeed = -Infinity
  private minOilPressure = Infinity

  constructor(cfg: TraceConfig) {
    validateTraceConfig(cfg)
    this.cfg = cfg
    const bands: OverRevBandConfig[] = [...cfg.overRevBands].sort((a, b) => a.minRpm - b.minRpm)
    this.idleRpm = cfg.idleRpm
    this.bandWidth = cfg.bandWidthRpm
    this.maxGap = cfg.maxGapS
    this.hasBands = bands.length > 0
    const low = bands[0]
    this.enterRpm = low ? low.minRpm : Infinity
    this.exitRpm = low ? low.minRpm - low.hysteresisRpm : Infinity
    this.lopBelow = cfg.lowOilPressure.belowBar
    this.lopAbove = cfg.lowOilPressure.aboveRpm
    this.overRevs = new OverRevExcursions(bands)
    this.lowOil = new LowOilPressureRuns(cfg.lowOilPressure.minDurationS)
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
    const histogram = this.histogram
    const moments = this.moments
    const overRevs = this.overRevs
    const lowOil = this.lowOil
    const overview = this.overview
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
          this.gaps.record(prevT, dt, this.firstT)
          histogram.addSegment(segBand, segStart, prevT)
          segBand = band
          segStart = t
          if (orOpen) overRevs.close(orStart, prevT, orPeak, this.firstT)
          if (lopOpen) lowOil.close(lopStart, prevT, lopMin, this.firstT)
          orOpen = false
          lopOpen = false
        } else {
          if (band !== segBand) {
            histogram.addSegment(segBand, segStart, t)
            segBand = band
            segStart = t
          }
          // the step takes the rpm of the sample that starts it, as the histogram does
          if (prevRpm > idleRpm) moments.add(prevRpm, dt)
          if (orOpen) overRevs.addStep(prevRpm, dt)
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
            overRevs.close(orStart, t, orPeak, this.firstT)
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
          lowOil.close(lopStart, t, lopMin, this.firstT)
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

      overview.sample(t, rpm, oilTemp, oilPressure, waterTemp, speed)

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
      // whatever is still open ends at the last sample
      const endT = this.prevT
      this.histogram.addSegment(this.segBand, this.segStart, endT)
      this.segBand = -1
      if (this.orOpen) this.overRevs.close(this.orStart, endT, this.orPeak, this.firstT)
      if (this.lopOpen) this.lowOil.close(this.lopStart, endT, this.lopMin, this.firstT)
      this.orOpen = false
      this.lopOpen = false
      this.overview.finish()
    }
    return summarize(
      this.cfg,
      {
        samples: this.samples,
        firstT: this.firstT,
        lastT: this.prevT,
        speedDistanceKm: this.distanceKm,
        maxRpm: this.maxRpm,
        maxOilTemp: this.maxOilTemp,
        maxWaterTemp: this.maxWaterTemp,
        maxSpeed: this.maxSpeed,
        minOilPressure: this.minOilPressure,
      },
      { histogram: this.histogram, moments: this.moments, overRevs: this.overRevs, lowOil: this.lowOil, gaps: this.gaps, overview: this.overview },
    )
  }
}

/** Convenience for tests and small traces already in memory. */
export function analyzeTrace(cfg: TraceConfig, samples: Iterable<TraceSample>): TraceSummary {
  const a = createTraceAnalyzer(cfg)
  for (const s of samples) a.push(s)
  return a.finish()
}
