// Invented logger traces for the demo and the benches: steady rpm steps drawn from a plausible
// duty, with over-rev excursions placed where asked, read by the same trace analyzer as a real
// logger file. So demo sessions carry exact equivalent hours and over-rev verdicts, not
// hand-filled histograms.
import { createTraceAnalyzer, createTraceBlock, type TraceSummary } from '../../shared/domain/trace'
import { LOW_OIL_CHECK_OFF, makeTraceConfig, type EngineTypeFixture } from '../fixtures'

export type TraceEngineType = Pick<EngineTypeFixture, 'revLimitRpm' | 'idleRpm' | 'bandWidthRpm' | 'overRevBands'>

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
  const bands = Math.ceil((t.revLimitRpm + 1000) / t.bandWidthRpm)
  const peak = t.revLimitRpm * (0.8 + 0.06 * intensity + rand() * 0.02)
  const sigma = t.revLimitRpm * 0.11
  const weights: number[] = []
  for (let i = 0; i < bands; i++) {
    const mid = (i + 0.5) * t.bandWidthRpm
    if (mid < t.idleRpm || mid > t.revLimitRpm + t.bandWidthRpm / 2) weights.push(0)
    else weights.push(Math.exp(-(((mid - peak) / sigma) ** 2)) + 0.04)
  }
  const total = weights.reduce((a, b) => a + b, 0)
  return () => {
    let r = rand() * total
    let i = 0
    while (i < weights.length - 1 && r >= weights[i]!) r -= weights[i++]!
    const rpm = (i + rand()) * t.bandWidthRpm
    // the limiter holds the engine at its rev limit; above it only the planned excursions go
    return Math.min(Math.max(rpm, t.idleRpm + 1), t.revLimitRpm)
  }
}

/**
 * Oil and water temperature, oil pressure and road speed that follow the rpm without drawing on
 * `rand` (so a seed's other figures stay as they were): temperatures lag towards a level set by
 * the load (first order, minutes), pressure rises with rpm towards the relief valve, speed follows
 * rpm through an invented gearing (none on the bench). Figures are invented, of a plausible size.
 */
function inventedChannels(t: TraceEngineType, topSpeedKmh: number | null) {
  let lastT = NaN
  let oil = 78
  let water = 74
  let speed = 0
  return (time: number, rpm: number, block: ReturnType<typeof createTraceBlock>, n: number) => {
    const load = Math.min(1, rpm / t.revLimitRpm)
    const dt = lastT === lastT ? time - lastT : 0
    lastT = time
    oil += (96 + 30 * load * load - oil) * Math.min(1, dt / 420)
    water += (84 + 14 * load - water) * Math.min(1, dt / 300)
    if (topSpeedKmh !== null) speed += (topSpeedKmh * load * load - speed) * Math.min(1, dt / 2.5)
    block.oilTempC[n] = Math.round(oil * 10) / 10
    block.waterTempC[n] = Math.round(water * 10) / 10
    block.oilPressureBar[n] = Math.round(Math.min(6.2, 0.9 + 5.8 * load) * 100) / 100
    // a bench run has no road speed
    block.speedKmh[n] = topSpeedKmh === null ? NaN : Math.round(speed * 10) / 10
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
  opts: { intensity?: number; excursions?: PlannedExcursion[]; stepS?: [min: number, max: number]; channels?: { topSpeedKmh: number | null } } = {},
): TraceSummary {
  const [stepMin, stepMax] = opts.stepS ?? [0.5, 1]
  const analyzer = createTraceAnalyzer(
    makeTraceConfig({ idleRpm: t.idleRpm, bandWidthRpm: t.bandWidthRpm, maxGapS: stepMax, overRevBands: t.overRevBands, lowOilPressure: LOW_OIL_CHECK_OFF }),
  )
  const next = rpmSampler(t, rand, opts.intensity ?? 1)
  const excursions = [...(opts.excursions ?? [])].sort((a, b) => a.at - b.at)
  const block = createTraceBlock(4096)
  let n = 0
  const channels = opts.channels ? inventedChannels(t, opts.channels.topSpeedKmh) : null
  const push = (time: number, rpm: number) => {
    block.t[n] = time
    block.rpm[n] = rpm
    if (channels) channels(time, rpm, block, n)
    else {
      block.speedKmh[n] = NaN
      block.oilTempC[n] = NaN
      block.oilPressureBar[n] = NaN
      block.waterTempC[n] = NaN
    }
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
      const from = t.revLimitRpm - 50
      push(time, from)
      for (let k = 1; k <= 2; k++) push((time += 0.05), from + ((ex.peakRpm - from) * k) / 2)
      const spikeFrom = ex.spike ? (ex.holdS - ex.spike.seconds) / 2 : Infinity
      const spikeTo = ex.spike ? spikeFrom + ex.spike.seconds : -Infinity
      for (let held = 0.05; held < ex.holdS - 1e-9; held += 0.05) {
        const inSpike = held >= spikeFrom - 1e-9 && held < spikeTo - 1e-9
        push((time += 0.05), inSpike ? ex.spike!.rpm : ex.peakRpm)
      }
      push((time += 0.05), t.revLimitRpm - 400)
      time += 0.05
      continue
    }
    push(time, next())
    time += stepMin + rand() * (stepMax - stepMin)
  }
  push(time, t.idleRpm) // the last sample closes the last step
  if (n > 0) analyzer.pushBlock(block, n)
  return analyzer.finish()
}
