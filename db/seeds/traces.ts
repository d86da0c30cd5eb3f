// Invented logger traces for the demo and the benches: steady rpm steps drawn from a plausible
// duty, with over-rev excursions placed where asked, read by the same trace analyzer as a real
// logger file. So demo sessions carry exact equivalent hours and over-rev verdicts, not
// hand-filled histograms.
import { createTraceAnalyzer, createTraceBlock, type TraceSummary } from '../../shared/domain/trace'

export interface TraceEngineType {
  rev_limit_rpm: number
  idle_rpm: number
  band_width_rpm: number
  over_rev_bands: { id: string; label: string; minRpm: number; minDurationS: number; hysteresisRpm: number }[]
}

export interface PlannedExcursion {
  /** fraction of the session at which it happens */
  at: number
  peakRpm: number
  /** seconds held at the peak */
  holdS: number
  /** a short flick higher in the middle of the hold (seconds in steps of 0.05) */
  spike?: { rpm: number; seconds: number }
}

/** Where the running time sits: mostly high in the range, some part throttle, none below idle. */
function rpmSampler(t: TraceEngineType, rand: () => number, intensity: number) {
  const bands = Math.ceil((t.rev_limit_rpm + 1000) / t.band_width_rpm)
  const peak = t.rev_limit_rpm * (0.8 + 0.06 * intensity + rand() * 0.02)
  const sigma = t.rev_limit_rpm * 0.11
  const weights: number[] = []
  for (let i = 0; i < bands; i++) {
    const mid = (i + 0.5) * t.band_width_rpm
    if (mid < t.idle_rpm || mid > t.rev_limit_rpm + t.band_width_rpm / 2) weights.push(0)
    else weights.push(Math.exp(-(((mid - peak) / sigma) ** 2)) + 0.04)
  }
  const total = weights.reduce((a, b) => a + b, 0)
  return () => {
    let r = rand() * total
    let i = 0
    while (i < weights.length - 1 && r >= weights[i]!) r -= weights[i++]!
    const rpm = (i + rand()) * t.band_width_rpm
    // the limiter holds the engine at its rev limit; above it only the planned excursions go
    return Math.min(Math.max(rpm, t.idle_rpm + 1), t.rev_limit_rpm)
  }
}

/**
 * A trace of about `seconds` of running: steps of 0.5 to 1 s at steady rpm (or `stepS` wide, for
 * the benches' large fleets), excursions sampled at 20 Hz (up to the peak in 0.1 s, held, down
 * again below the lowest band's hysteresis).
 */
export function syntheticTrace(
  t: TraceEngineType,
  seconds: number,
  rand: () => number,
  opts: { intensity?: number; excursions?: PlannedExcursion[]; stepS?: [min: number, max: number] } = {},
): TraceSummary {
  const [stepMin, stepMax] = opts.stepS ?? [0.5, 1]
  const analyzer = createTraceAnalyzer({
    idleRpm: t.idle_rpm,
    bandWidthRpm: t.band_width_rpm,
    maxGapS: stepMax,
    overRevBands: t.over_rev_bands,
    lowOilPressure: { belowBar: 0, aboveRpm: 0, minDurationS: 1 },
    trackLengthKm: null,
    laps: null,
  })
  const next = rpmSampler(t, rand, opts.intensity ?? 1)
  const excursions = [...(opts.excursions ?? [])].sort((a, b) => a.at - b.at)
  const block = createTraceBlock(4096)
  let n = 0
  const push = (time: number, rpm: number) => {
    block.t[n] = time
    block.rpm[n] = rpm
    block.speedKmh[n] = NaN
    block.oilTempC[n] = NaN
    block.oilPressureBar[n] = NaN
    block.waterTempC[n] = NaN
    if (++n === 4096) {
      analyzer.pushBlock(block, n)
      n = 0
    }
  }
  let time = 0
  let e = 0
  while (time < seconds) {
    const ex = excursions[e]
    if (ex && time >= ex.at * seconds) {
      e++
      const from = t.rev_limit_rpm - 50
      push(time, from)
      for (let k = 1; k <= 2; k++) push((time += 0.05), from + ((ex.peakRpm - from) * k) / 2)
      const spikeFrom = ex.spike ? (ex.holdS - ex.spike.seconds) / 2 : Infinity
      const spikeTo = ex.spike ? spikeFrom + ex.spike.seconds : -Infinity
      for (let held = 0.05; held < ex.holdS - 1e-9; held += 0.05) {
        const inSpike = held >= spikeFrom - 1e-9 && held < spikeTo - 1e-9
        push((time += 0.05), inSpike ? ex.spike!.rpm : ex.peakRpm)
      }
      push((time += 0.05), t.rev_limit_rpm - 400)
      time += 0.05
      continue
    }
    push(time, next())
    time += stepMin + rand() * (stepMax - stepMin)
  }
  push(time, t.idle_rpm) // the last sample closes the last step
  if (n > 0) analyzer.pushBlock(block, n)
  return analyzer.finish()
}
