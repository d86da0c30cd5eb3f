// What a session keeps so that equivalent hours can be evaluated exactly, for any damage
// exponent p and any reference rpm, long after the raw file was read.
//
// Definition (Palmgren-Miner with Basquin's S-N line, Shigley's fatigue chapter):
//   equivalent hours = sum over time steps of dt * (rpm / rpm_ref)^p
// A coarse rev histogram evaluated at band midpoints is not this: with p of 13-19 and
// 250-500 rpm bands it is off by tens of per cent.
//
// Running time is binned by ln(rpm) in bins of width DELTA. Within bin k, centred at
// c_k = exp((k + 0.5) DELTA), each step has u = ln(rpm) - ln(c_k), |u| <= DELTA / 2, and
//   (rpm / ref)^p = (c_k / ref)^p * exp(p u).
// The bin keeps the moments T = sum dt, M1 = sum dt u, M2 = sum dt u^2, so that
//   sum dt exp(p u) = T + p M1 + p^2 M2 / 2 + R,  |R| <= sum dt |x|^3 / 6 * e^|x|,  x = p u.
// Against the exact bin value (at least T e^(-x_max)) the relative error is at most
// x_max^3 / 6 * e^(2 x_max) with x_max = p DELTA / 2: 2.0e-4 at p = 20, 2.0e-3 at p = 40 (the most a
// part type accepts); the session page states the bound for the exponents of the parts fitted.
// p = 0 gives plain running hours exactly.

/** Width of one bin in ln(rpm): 1 % of rpm. */
export const DELTA = 0.01
const INV_DELTA = 1 / DELTA
const SECONDS_PER_HOUR = 3600

/**
 * Dense moments from bin `first` on: t[i], m1[i], m2[i] belong to bin first + i.
 * Bins with no running time inside the range hold zeros.
 */
export interface RpmMoments {
  first: number
  t: number[]
  m1: number[]
  m2: number[]
}

/** Upper bound of |evaluated - exact| / exact for one session at exponent p. */
export function momentsRelativeErrorBound(exponent: number): number {
  const x = (Math.abs(exponent) * DELTA) / 2
  return ((x * x * x) / 6) * Math.exp(2 * x)
}

function binOfRpm(rpm: number): number {
  return Math.floor(Math.log(rpm) * INV_DELTA)
}

/**
 * Accumulates running time per ln(rpm) bin. Dense storage over the bins an engine can reach
 * (ln 100,000 / DELTA = 1,152 bins), so adding a step is a few array writes.
 */
export class RpmMomentsAccumulator {
  private readonly acc: Float64Array
  private lo = Infinity
  private hi = -1
  private lastRpm = NaN
  private lastBin = 0
  private lastU = 0

  constructor(maxRpm = 100_000) {
    this.acc = new Float64Array(3 * (binOfRpm(maxRpm) + 2))
  }

  /** Adds dt seconds at a steady rpm (> 0). */
  add(rpm: number, dt: number): void {
    if (rpm !== this.lastRpm) {
      // loggers repeat the same value for many samples: the logarithm is taken once per value
      const l = Math.log(rpm) * INV_DELTA
      const k = Math.floor(l)
      this.lastRpm = rpm
      this.lastBin = k
      this.lastU = (l - k - 0.5) * DELTA
    }
    const k = this.lastBin
    const u = this.lastU
    const acc = this.acc
    const j = 3 * k
    acc[j]! += dt
    acc[j + 1]! += dt * u
    acc[j + 2]! += dt * u * u
    if (k < this.lo) this.lo = k
    if (k > this.hi) this.hi = k
  }

  result(): RpmMoments {
    const m: RpmMoments = { first: 0, t: [], m1: [], m2: [] }
    if (this.hi < 0) return m
    m.first = this.lo
    for (let k = this.lo; k <= this.hi; k++) {
      m.t.push(this.acc[3 * k]!)
      m.m1.push(this.acc[3 * k + 1]!)
      m.m2.push(this.acc[3 * k + 2]!)
    }
    return m
  }
}

/** Moments of a trace given as steady segments (rpm, seconds): for tests, seeds and manual data with exact rpm. */
export function momentsOfSegments(segments: { rpm: number; seconds: number }[]): RpmMoments {
  const a = new RpmMomentsAccumulator()
  for (const s of segments) if (s.seconds > 0 && s.rpm > 0) a.add(s.rpm, s.seconds)
  return a.result()
}

/** Equivalent hours at referenceRpm with damage exponent p (p = 0: plain running hours). */
export function equivalentHoursFromMoments(m: RpmMoments, referenceRpm: number, exponent: number): number {
  if (!(referenceRpm > 0)) throw new RangeError('reference rpm must be positive')
  const p = exponent
  const n = m.t.length
  if (n === 0) return 0
  if (p === 0) {
    let s = 0
    for (let i = 0; i < n; i++) s += m.t[i]!
    return s / SECONDS_PER_HOUR
  }
  // (c_k / ref)^p for successive bins grows by the factor e^(p DELTA): one exp per session.
  let weight = Math.exp(p * ((m.first + 0.5) * DELTA - Math.log(referenceRpm)))
  const step = Math.exp(p * DELTA)
  const half = (p * p) / 2
  let total = 0
  for (let i = 0; i < n; i++) {
    const t = m.t[i]!
    if (t !== 0) total += weight * (t + p * m.m1[i]! + half * m.m2[i]!)
    weight *= step
  }
  return total / SECONDS_PER_HOUR
}

/** Key of one (exponent, reference rpm) pair in a session's cache of exact equivalent hours. */
export function eqCacheKey(exponent: number, referenceRpm: number): string {
  return `${exponent}@${referenceRpm}`
}

/**
 * A session's exact equivalent hours for the pairs in use, evaluated once from its moments, so
 * that a fleet-wide computation reads a few numbers per session instead of its moments.
 */
export function eqCacheOf(m: RpmMoments, referenceRpm: number, exponents: number[]): Record<string, number> {
  const cache: Record<string, number> = {}
  for (const p of exponents) cache[eqCacheKey(p, referenceRpm)] = equivalentHoursFromMoments(m, referenceRpm, p)
  return cache
}

// Storage: little-endian float64s [first, count, t..., m1..., m2...], a few kB a session,
// read back without parsing text (the board reads every session of the fleet).
export function encodeMoments(m: RpmMoments): Uint8Array {
  const n = m.t.length
  const view = new DataView(new ArrayBuffer(8 * (2 + 3 * n)))
  view.setFloat64(0, m.first, true)
  view.setFloat64(8, n, true)
  for (let i = 0; i < n; i++) {
    view.setFloat64(16 + 8 * i, m.t[i]!, true)
    view.setFloat64(16 + 8 * (n + i), m.m1[i]!, true)
    view.setFloat64(16 + 8 * (2 * n + i), m.m2[i]!, true)
  }
  return new Uint8Array(view.buffer)
}

export function decodeMoments(bytes: Uint8Array): RpmMoments {
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
  if (bytes.byteLength < 16) throw new RangeError('stored rpm moments are truncated')
  const first = view.getFloat64(0, true)
  const n = view.getFloat64(8, true)
  if (!Number.isInteger(n) || n < 0 || bytes.byteLength !== 8 * (2 + 3 * n)) throw new RangeError('stored rpm moments have the wrong length')
  const m: RpmMoments = { first, t: new Array(n), m1: new Array(n), m2: new Array(n) }
  for (let i = 0; i < n; i++) {
    m.t[i] = view.getFloat64(16 + 8 * i, true)
    m.m1[i] = view.getFloat64(16 + 8 * (n + i), true)
    m.m2[i] = view.getFloat64(16 + 8 * (2 * n + i), true)
  }
  return m
}

/**
 * Bounds of equivalent hours from a band histogram alone (a manual session): every second of
 * band i lies somewhere in [i w, (i+1) w), so the exact value lies between the low-edge and
 * high-edge evaluations; the midpoint value is what the ledger counts, marked approximate.
 */
export function histogramEqHoursBounds(
  histogramSeconds: number[],
  bandWidthRpm: number,
  referenceRpm: number,
  exponent: number,
): { low: number; mid: number; high: number } {
  let low = 0
  let mid = 0
  let high = 0
  histogramSeconds.forEach((s, i) => {
    if (!s) return
    const h = s / SECONDS_PER_HOUR
    low += h * Math.pow((i * bandWidthRpm) / referenceRpm, exponent)
    mid += h * Math.pow(((i + 0.5) * bandWidthRpm) / referenceRpm, exponent)
    high += h * Math.pow(((i + 1) * bandWidthRpm) / referenceRpm, exponent)
  })
  return { low, mid, high }
}
