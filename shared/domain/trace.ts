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

export interface OverRevBandConfig {
  id: string
  label: string
  minRpm: number
  minDurationS: number
  hysteresisRpm: number
}

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

export interface OverRevEvent {
  bandId: string
  startS: number
  durationS: number
  peakRpm: number
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

export interface TraceAnalyzer {
  /** Copies what it needs: the caller may reuse one sample object for every push. */
  push(s: TraceSample): void
  /** push() with plain numbers, NaN for an absent channel: no object per sample. */
  pushValues(t: number, rpm: number, speedKmh: number, oilTempC: number, oilPressureBar: number, waterTempC: number): void
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
 * Over-rev rule: an excursion starts at the first sample with rpm >= the lowest band's
 * minRpm and ends at the first sample with rpm < (lowest band minRpm - its hysteresisRpm),
 * so chatter around the threshold counts once. The excursion is one event, assigned to the
 * highest band whose minRpm its peak reached and whose minDurationS it lasted; if it lasted
 * less than every reached band's minDurationS it is not an event.
 * Low oil pressure: a run of samples with pressure < belowBar while rpm > aboveRpm, kept when
 * it lasts at least minDurationS; a sample without a pressure value ends the run.
 */
export function createTraceAnalyzer(cfg: TraceConfig): TraceAnalyzer {
  return new TraceAnalyzerCore(cfg)
}

// A class rather than a closure: V8 keeps number fields of an object unboxed, while
// numbers captured by a closure are boxed on every update (a heap allocation per sample).
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

  private samples = 0
  private firstT = 0
  private prevT = 0
  private prevSpeed = NaN

  // Histogram by segments of consecutive steps in one band: one subtraction per segment
  // keeps sums exact for decimal timestamps (no drift from adding 0.01 a million times).
  private readonly histogram: number[] = []
  private segBand = -1 // -1: not running
  private segStart = 0
  private runningSeconds = 0

  private distanceKm = 0
  private sawSpeed = false

  private readonly gaps: TraceGap[] = []
  private gapCount = 0
  private gapSeconds = 0

  private readonly overRevs: OverRevEvent[] = []
  private orOpen = false
  private orStart = 0
  private orPeak = 0

  private readonly lowOil: LowOilPressureEvent[] = []
  private lopOpen = false
  private lopStart = 0
  private lopMin = 0

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
  private bucketT = 0

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
    if (!Number.isFinite(t)) throw new RangeError(`sample time must be finite, got ${t}`)
    if (!(rpm >= 0 && rpm <= TRACE_MAX_RPM)) throw new RangeError(`rpm must be within 0..${TRACE_MAX_RPM}, got ${rpm}`)
    const hasSpeed = speed === speed
    const band = rpm > this.idleRpm ? Math.floor(rpm / this.bandWidth) : -1

    if (this.samples === 0) {
      this.firstT = t
      this.segBand = band
      this.segStart = t
    } else {
      const prevT = this.prevT
      const dt = t - prevT
      if (!(dt > 0)) throw new RangeError(`sample times must increase: ${t} after ${prevT}`)
      if (dt > this.maxGap) {
        this.gapCount++
        this.gapSeconds += dt
        if (this.gaps.length < MAX_LISTED_GAPS) this.gaps.push({ atS: prevT - this.firstT, seconds: dt })
        this.flushSegment(prevT)
        this.segBand = band
        this.segStart = t
        if (this.orOpen) this.closeOverRev(prevT)
        if (this.lopOpen) this.closeLowOil(prevT)
      } else {
        if (band !== this.segBand) {
          this.flushSegment(t)
          this.segBand = band
          this.segStart = t
        }
        // trapezoid; with one end missing, hold the known value
        const v0 = this.prevSpeed
        if (hasSpeed || v0 === v0) {
          const a = v0 === v0 ? v0 : speed
          const b = hasSpeed ? speed : v0
          this.distanceKm += ((a + b) * 0.5 * dt) / 3600
        }
      }
    }

    if (this.hasBands) {
      if (this.orOpen) {
        if (rpm < this.exitRpm) this.closeOverRev(t)
        else if (rpm > this.orPeak) this.orPeak = rpm
      }
      if (!this.orOpen && rpm >= this.enterRpm) {
        this.orOpen = true
        this.orStart = t
        this.orPeak = rpm
      }
    }

    const lowNow = oilPressure < this.lopBelow && rpm > this.lopAbove // false for NaN
    if (this.lopOpen) {
      if (!lowNow) this.closeLowOil(t)
      else if (oilPressure < this.lopMin) this.lopMin = oilPressure
    }
    if (!this.lopOpen && lowNow) {
      this.lopOpen = true
      this.lopStart = t
      this.lopMin = oilPressure
    }

    if (rpm > this.maxRpm) this.maxRpm = rpm
    if (hasSpeed) {
      this.sawSpeed = true
      if (speed > this.maxSpeed) this.maxSpeed = speed
    }
    if (oilTemp > this.maxOilTemp) this.maxOilTemp = oilTemp
    if (waterTemp > this.maxWaterTemp) this.maxWaterTemp = waterTemp
    if (band >= 0 && oilPressure < this.minOilPressure) this.minOilPressure = oilPressure

    if (rpm > this.bucketMax) {
      this.bucketMax = rpm
      this.bucketT = t
    }
    if (++this.bucketCount >= this.bucketSize) this.closeBucket()

    this.samples++
    this.prevT = t
    this.prevSpeed = speed
  }

  finish(): TraceSummary {
    if (this.samples > 0) {
      this.flushSegment(this.prevT)
      this.segBand = -1
      if (this.orOpen) this.closeOverRev(this.prevT)
      if (this.lopOpen) this.closeLowOil(this.prevT)
      if (this.bucketCount > 0) {
        this.ovT.push(this.bucketT)
        this.ovRpm.push(this.bucketMax)
        this.bucketCount = 0
      }
    }
    const cfg = this.cfg
    let distance = 0
    let source: TraceSummary['distanceSource'] = 'none'
    if (this.sawSpeed) {
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

  private flushSegment(untilT: number): void {
    const b = this.segBand
    const dt = untilT - this.segStart
    // a zero-length segment (the last sample's band) must not lengthen the histogram
    if (b >= 0 && dt > 0) {
      const h = this.histogram
      while (h.length <= b) h.push(0)
      h[b]! += dt
      this.runningSeconds += dt
    }
  }

  private closeOverRev(endT: number): void {
    this.orOpen = false
    const duration = endT - this.orStart
    const bands = this.bands
    for (let i = bands.length - 1; i >= 0; i--) {
      const band = bands[i]!
      if (this.orPeak >= band.minRpm && duration + DURATION_EPSILON_S >= band.minDurationS) {
        this.overRevs.push({ bandId: band.id, startS: this.orStart - this.firstT, durationS: duration, peakRpm: this.orPeak })
        return
      }
    }
  }

  private closeLowOil(endT: number): void {
    this.lopOpen = false
    const duration = endT - this.lopStart
    if (duration + DURATION_EPSILON_S >= this.lopMinDuration) {
      this.lowOil.push({ startS: this.lopStart - this.firstT, durationS: duration, minBar: this.lopMin })
    }
  }

  private closeBucket(): void {
    const ovT = this.ovT
    const ovRpm = this.ovRpm
    ovT.push(this.bucketT)
    ovRpm.push(this.bucketMax)
    this.bucketCount = 0
    this.bucketMax = -1
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
  }
}

/** Convenience for tests and small traces already in memory. */
export function analyzeTrace(cfg: TraceConfig, samples: Iterable<TraceSample>): TraceSummary {
  const a = createTraceAnalyzer(cfg)
  for (const s of samples) a.push(s)
  return a.finish()
}
