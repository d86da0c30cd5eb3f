// Two-parameter Weibull analysis of field lives with suspensions (right-censored units).
// Pure: no clock, no I/O. A fit informs the supplier's engineering decision on a limit; it never
// sets one, and it is no substitute for the service instructions, inspection and licensed practice.
//
// F(t) = 1 - exp(-(t / scale)^shape). Two estimates are given side by side:
// - maximum likelihood (failures contribute the density, suspensions the survival function), with
//   Fisher-matrix confidence bounds from the observed information;
// - median-rank regression: Johnson's adjusted ranks for suspensions, Benard's approximation
//   (i - 0.3) / (n + 0.4) for the median rank, and least squares of ln(life) on ln(-ln(1 - F))
//   (rank regression on X, the usual choice in the Weibull handbook literature).

export interface LifeUnit {
  life: number
  failed: boolean
}

/** Fewer failures than this give no fit (common practice: two points fix any line, three begin to test it). */
export const MIN_FAILURES = 3
/** Two-sided confidence level of the bounds. */
export const CONFIDENCE = 0.9
/** Standard normal quantile for the two-sided 90 % level (the 95th percentile). */
const Z_TWO_SIDED_90 = 1.6448536269514722

export type FitRefusalReason = 'no-units' | 'no-failures' | 'too-few-failures' | 'no-spread'

export interface FitRefusal {
  fitted: false
  reason: FitRefusalReason
  message: string
  units: number
  failures: number
}

export interface Bound {
  value: number
  lower: number
  upper: number
}

export interface MleFit {
  method: 'maximum likelihood'
  shape: Bound
  scale: Bound
  b1: Bound
  b10: Bound
  logLikelihood: number
  /** covariance of (shape, scale), the inverse of the observed Fisher information */
  covariance: [[number, number], [number, number]]
  boundsMethod: 'Fisher matrix'
  confidence: number
}

export interface MrrFit {
  method: 'median-rank regression'
  shape: number
  scale: number
  b1: number
  b10: number
  /** coefficient of determination of the straight line on Weibull axes */
  r2: number
}

export interface RankedFailure {
  life: number
  /** position counted from the longest life (n for the shortest) */
  reverseRank: number
  /** Johnson's adjusted rank: the order number a failure would have had without the suspensions */
  adjustedRank: number
  /** Benard's approximation of the median rank at the adjusted rank */
  medianRank: number
}

export interface WeibullFit {
  fitted: true
  units: number
  failures: number
  suspensions: number
  mle: MleFit
  mrr: MrrFit
  ranked: RankedFailure[]
}

export type WeibullAnswer = WeibullFit | FitRefusal

/** Benard's approximation of the median rank of the i-th of n ordered failures. */
export function benardMedianRank(i: number, n: number): number {
  return (i - 0.3) / (n + 0.4)
}

export function weibullCdf(t: number, shape: number, scale: number): number {
  return t <= 0 ? 0 : 1 - Math.exp(-Math.pow(t / scale, shape))
}

/** The life by which a fraction p would have failed (B10 is p = 0.1). */
export function bLife(p: number, shape: number, scale: number): number {
  return scale * Math.pow(-Math.log(1 - p), 1 / shape)
}

/** The ordinate of the Weibull probability plot for an unreliability F: ln(-ln(1 - F)). */
export function weibullAxisY(F: number): number {
  return Math.log(-Math.log(1 - F))
}

/** Inverse of weibullAxisY. */
export function unreliabilityAtAxisY(y: number): number {
  return 1 - Math.exp(-Math.exp(y))
}

/** Lives in order; at equal life a failure comes before a suspension (the suspended unit outlived it). */
function ordered(units: readonly LifeUnit[]): LifeUnit[] {
  return [...units].sort((a, b) => a.life - b.life || Number(b.failed) - Number(a.failed))
}

/**
 * Johnson's adjusted ranks with Benard's median ranks. Each failure's rank grows from the previous
 * failure's by (n + 1 - previous) / (1 + reverse rank), so a suspension before it spreads its share
 * over the units still running.
 */
export function adjustedRanks(units: readonly LifeUnit[]): RankedFailure[] {
  const sorted = ordered(units)
  const n = sorted.length
  const out: RankedFailure[] = []
  let previous = 0
  sorted.forEach((u, index) => {
    if (!u.failed) return
    const reverseRank = n - index
    const adjustedRank = previous + (n + 1 - previous) / (1 + reverseRank)
    previous = adjustedRank
    out.push({ life: u.life, reverseRank, adjustedRank, medianRank: benardMedianRank(adjustedRank, n) })
  })
  return out
}

/** Least squares of x = ln(life) on y = ln(-ln(1 - F)): x = a + b y, so shape = 1 / b and scale = e^a. */
export function fitMedianRankRegression(units: readonly LifeUnit[]): MrrFit {
  const ranked = adjustedRanks(units)
  const xs = ranked.map((r) => Math.log(r.life))
  const ys = ranked.map((r) => weibullAxisY(r.medianRank))
  const k = xs.length
  const mx = xs.reduce((s, v) => s + v, 0) / k
  const my = ys.reduce((s, v) => s + v, 0) / k
  let sxy = 0
  let syy = 0
  let sxx = 0
  for (let i = 0; i < k; i++) {
    sxy += (xs[i]! - mx) * (ys[i]! - my)
    syy += (ys[i]! - my) ** 2
    sxx += (xs[i]! - mx) ** 2
  }
  const b = sxy / syy
  const a = mx - b * my
  const shape = 1 / b
  const scale = Math.exp(a)
  return { method: 'median-rank regression', shape, scale, b1: bLife(0.01, shape, scale), b10: bLife(0.1, shape, scale), r2: (sxy * sxy) / (sxx * syy) }
}

/**
 * The profile score in the shape: zero at the maximum-likelihood shape, rising with it.
 * Lives are divided by the largest first so that t^shape cannot overflow.
 */
function profileScore(shape: number, lives: number[], failedLogMean: number): number {
  let sw = 0
  let swl = 0
  for (const t of lives) {
    const w = Math.pow(t, shape)
    sw += w
    swl += w * Math.log(t)
  }
  return swl / sw - 1 / shape - failedLogMean
}

function logLikelihood(units: readonly LifeUnit[], shape: number, scale: number): number {
  let ll = 0
  for (const u of units) {
    const z = u.life / scale
    if (u.failed) ll += Math.log(shape / scale) + (shape - 1) * Math.log(z)
    ll -= Math.pow(z, shape)
  }
  return ll
}

const MAX_SHAPE = 500

/** Maximum-likelihood shape and scale with Fisher-matrix bounds; null when the likelihood has no finite maximum. */
export function fitMaximumLikelihood(units: readonly LifeUnit[], confidence = CONFIDENCE): MleFit | null {
  const top = Math.max(...units.map((u) => u.life))
  const lives = units.map((u) => u.life / top)
  const failedLogs = units.filter((u) => u.failed).map((u) => Math.log(u.life / top))
  const r = failedLogs.length
  const failedLogMean = failedLogs.reduce((s, v) => s + v, 0) / r
  let lo = 1e-3
  let hi = 1
  while (profileScore(hi, lives, failedLogMean) < 0) {
    hi *= 2
    if (hi > MAX_SHAPE) return null
  }
  for (let i = 0; i < 200 && hi - lo > 1e-13 * hi; i++) {
    const mid = (lo + hi) / 2
    if (profileScore(mid, lives, failedLogMean) < 0) lo = mid
    else hi = mid
  }
  const shape = (lo + hi) / 2
  const scale = top * Math.pow(lives.reduce((s, t) => s + Math.pow(t, shape), 0) / r, 1 / shape)

  // Observed information: minus the Hessian of the log-likelihood in (shape, scale).
  let sw = 0
  let swl = 0
  let swl2 = 0
  for (const u of units) {
    const l = Math.log(u.life / scale)
    const w = Math.pow(u.life / scale, shape)
    sw += w
    swl += w * l
    swl2 += w * l * l
  }
  const hBB = -r / shape ** 2 - swl2
  const hEE = (shape / scale ** 2) * (r - (shape + 1) * sw)
  const hBE = (-r + sw + shape * swl) / scale
  const det = hBB * hEE - hBE * hBE
  const vBB = -hEE / det
  const vEE = -hBB / det
  const vBE = hBE / det
  const z = confidence === CONFIDENCE ? Z_TWO_SIDED_90 : normalQuantile(0.5 + confidence / 2)

  const positiveBound = (value: number, variance: number): Bound => {
    const f = Math.exp((z * Math.sqrt(Math.max(variance, 0))) / value)
    return { value, lower: value / f, upper: value * f }
  }
  const bBound = (p: number): Bound => {
    const k = Math.log(-Math.log(1 - p))
    const value = bLife(p, shape, scale)
    // delta method on ln(Bp) = ln(scale) + k / shape
    const dB = -k / shape ** 2
    const dE = 1 / scale
    const variance = dB * dB * vBB + dE * dE * vEE + 2 * dB * dE * vBE
    const f = Math.exp(z * Math.sqrt(Math.max(variance, 0)))
    return { value, lower: value / f, upper: value * f }
  }
  return {
    method: 'maximum likelihood',
    shape: positiveBound(shape, vBB),
    scale: positiveBound(scale, vEE),
    b1: bBound(0.01),
    b10: bBound(0.1),
    logLikelihood: logLikelihood(units, shape, scale),
    covariance: [[vBB, vBE], [vBE, vEE]],
    boundsMethod: 'Fisher matrix',
    confidence,
  }
}

/** Acklam's rational approximation of the standard normal quantile (relative error below 1.2e-9). */
export function normalQuantile(p: number): number {
  const a = [-39.69683028665376, 220.9460984245205, -275.9285104469687, 138.357751867269, -30.66479806614716, 2.506628277459239]
  const b = [-54.47609879822406, 161.5858368580409, -155.6989798598866, 66.80131188771972, -13.28068155288572]
  const c = [-0.007784894002430293, -0.3223964580411365, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783]
  const d = [0.007784695709041462, 0.3224671290700398, 2.445134137142996, 3.754408661907416]
  const tail = (q: number) => (((((c[0]! * q + c[1]!) * q + c[2]!) * q + c[3]!) * q + c[4]!) * q + c[5]!) / ((((d[0]! * q + d[1]!) * q + d[2]!) * q + d[3]!) * q + 1)
  if (p < 0.02425) return tail(Math.sqrt(-2 * Math.log(p)))
  if (p > 1 - 0.02425) return -tail(Math.sqrt(-2 * Math.log(1 - p)))
  const q = p - 0.5
  const r = q * q
  return ((((((a[0]! * r + a[1]!) * r + a[2]!) * r + a[3]!) * r + a[4]!) * r + a[5]!) * q) / (((((b[0]! * r + b[1]!) * r + b[2]!) * r + b[3]!) * r + b[4]!) * r + 1)
}

function refuse(reason: FitRefusalReason, units: number, failures: number, message: string): FitRefusal {
  return { fitted: false, reason, message, units, failures }
}

/**
 * Both estimates for one failure mode, or the reason there is none. Units with no running (life 0)
 * carry no information and are left out by the caller.
 */
export function fitWeibull(units: readonly LifeUnit[]): WeibullAnswer {
  const n = units.length
  const failures = units.filter((u) => u.failed)
  const r = failures.length
  if (units.some((u) => !(u.life > 0) || !Number.isFinite(u.life))) throw new RangeError('every life must be a finite number above zero')
  if (n === 0) return refuse('no-units', 0, 0, 'No part of this type has run yet: there is nothing to fit.')
  if (r === 0) {
    return refuse('no-failures', n, 0, `All ${n} units are suspensions (no failure of this mode): a Weibull line needs failures to rest on, so none is drawn. The data are shown as they are.`)
  }
  if (r < MIN_FAILURES) {
    return refuse('too-few-failures', n, r, `${r} failure${r === 1 ? '' : 's'} of ${n} units: at least ${MIN_FAILURES} failures are needed before a shape and scale mean anything, so the data are shown without a fit.`)
  }
  const failedLives = new Set(failures.map((u) => u.life))
  if (failedLives.size === 1) {
    return refuse('no-spread', n, r, `All ${r} failures are at the same life: the spread, and so the shape, cannot be estimated.`)
  }
  const mle = fitMaximumLikelihood(units)
  if (!mle) return refuse('no-spread', n, r, 'The failures are too closely bunched against the suspensions for the likelihood to have a finite maximum.')
  return { fitted: true, units: n, failures: r, suspensions: n - r, mle, mrr: fitMedianRankRegression(units), ranked: adjustedRanks(units) }
}
