import { createRequire } from 'node:module'
import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics' // the ESM build has no default export
import { adjustedRanks, benardMedianRank, bLife, fitMaximumLikelihood, fitMedianRankRegression, fitWeibull, MIN_FAILURES, normalQuantile, unreliabilityAtAxisY, weibullAxisY, type LifeUnit } from '../../shared/domain/weibull'

// jstat has no type declarations; it is used here only as an independent Weibull density and distribution.
const { jStat } = createRequire(import.meta.url)('jstat') as { jStat: any }

const failed = (life: number): LifeUnit => ({ life, failed: true })
const suspended = (life: number): LifeUnit => ({ life, failed: false })

// Deep-groove ball bearing endurance data, millions of revolutions, 23 bearings, all failed
// (Lieblein and Zelen, 1956), the worked example of Lawless, Statistical Models and Methods for
// Lifetime Data (Weibull maximum likelihood): shape 2.102, scale 81.88 [from memory].
const BALL_BEARINGS = [17.88, 28.92, 33.0, 41.52, 42.12, 45.6, 48.48, 51.84, 51.96, 54.12, 55.56, 67.8, 68.64, 68.64, 68.88, 84.12, 93.12, 98.64, 105.12, 105.84, 127.92, 128.04, 173.4]

// A censored set used below: failures and suspensions interleaved (invented).
const CENSORED: LifeUnit[] = [failed(31.7), suspended(39.2), failed(57.5), suspended(65), failed(65.8), failed(70), suspended(75), failed(80.6), suspended(86.4), failed(98.3), suspended(110), failed(121.4)]

/** The log-likelihood written out from jstat's density and distribution, not from the code under test. */
function jstatLogLikelihood(units: LifeUnit[], shape: number, scale: number): number {
  return units.reduce((s, u) => s + (u.failed ? Math.log(jStat.weibull.pdf(u.life, scale, shape)) : Math.log(1 - jStat.weibull.cdf(u.life, scale, shape))), 0)
}

/** Nelder-Mead on (ln shape, ln scale): a maximiser that shares nothing with the code under test. */
function nelderMeadMax(f: (x: number[]) => number, start: number[]): number[] {
  let simplex = [start, [start[0]! + 0.3, start[1]!], [start[0]!, start[1]! + 0.3]].map((p) => ({ p, v: f(p) }))
  for (let k = 0; k < 4000; k++) {
    simplex.sort((a, b) => b.v - a.v)
    const [best, mid, worst] = simplex as [{ p: number[]; v: number }, { p: number[]; v: number }, { p: number[]; v: number }]
    if (Math.abs(best.v - worst.v) < 1e-15) break
    const c = [0, 1].map((i) => (best.p[i]! + mid.p[i]!) / 2)
    const at = (t: number) => c.map((ci, i) => ci + t * (worst.p[i]! - ci))
    const r = at(-1)
    const fr = f(r)
    if (fr > best.v) {
      const e = at(-2)
      const fe = f(e)
      simplex[2] = fe > fr ? { p: e, v: fe } : { p: r, v: fr }
    } else if (fr > mid.v) {
      simplex[2] = { p: r, v: fr }
    } else {
      const ct = at(0.5)
      const fc = f(ct)
      if (fc > worst.v) simplex[2] = { p: ct, v: fc }
      else simplex = simplex.map((s, i) => (i === 0 ? s : { p: s.p.map((x, j) => best.p[j]! + 0.5 * (x - best.p[j]!)), v: 0 })).map((s) => ({ p: s.p, v: f(s.p) }))
    }
  }
  return simplex.sort((a, b) => b.v - a.v)[0]!.p
}

describe('median ranks', () => {
  it("Benard's approximation (i - 0.3) / (n + 0.4), worked by hand", () => {
    // i = 1, n = 10: 0.7 / 10.4 = 0.0673077; i = 5, n = 10: 4.7 / 10.4 = 0.4519231; i = 3, n = 5: 2.7 / 5.4 = 0.5
    expect(benardMedianRank(1, 10)).toBeCloseTo(0.0673077, 7)
    expect(benardMedianRank(5, 10)).toBeCloseTo(0.4519231, 7)
    expect(benardMedianRank(3, 5)).toBe(0.5)
  })

  it("Johnson's adjusted ranks with suspensions, worked by hand", () => {
    // n = 5: 10 F, 20 S, 30 F, 40 F, 50 S. Increment = (n + 1 - previous) / (1 + reverse rank):
    // 10: (6 - 0) / (1 + 5) = 1 -> rank 1, median 0.7 / 5.4 = 0.1296296
    // 30: (6 - 1) / (1 + 3) = 1.25 -> rank 2.25, median 1.95 / 5.4 = 0.3611111
    // 40: (6 - 2.25) / (1 + 2) = 1.25 -> rank 3.5, median 3.2 / 5.4 = 0.5925926
    const ranks = adjustedRanks([failed(40), suspended(20), failed(10), suspended(50), failed(30)])
    expect(ranks.map((r) => r.life)).toEqual([10, 30, 40])
    expect(ranks.map((r) => r.reverseRank)).toEqual([5, 3, 2])
    expect(ranks.map((r) => r.adjustedRank)).toEqual([1, 2.25, 3.5])
    ranks.forEach((r, i) => expect(r.medianRank).toBeCloseTo([0.1296296, 0.3611111, 0.5925926][i]!, 7))
  })

  it('puts a failure before a suspension at the same life (the suspended unit outlived it)', () => {
    // n = 3: 10 F, 10 S, 20 F: 10 has reverse rank 3 -> rank 1; 20: (4 - 1) / (1 + 1) = 1.5 -> 2.5
    expect(adjustedRanks([suspended(10), failed(20), failed(10)]).map((r) => r.adjustedRank)).toEqual([1, 2.5])
  })

  it('without suspensions the adjusted ranks are the order numbers', () => {
    expect(adjustedRanks(BALL_BEARINGS.map(failed)).map((r) => r.adjustedRank)).toEqual(BALL_BEARINGS.map((_, i) => i + 1))
  })
})

describe('maximum likelihood', () => {
  it('ball bearings (Lawless, Lieblein and Zelen data): shape 2.102, scale 81.88 to the printed precision [from memory]', () => {
    const fit = fitWeibull(BALL_BEARINGS.map(failed))
    if (!fit.fitted) throw new Error(fit.message)
    expect(Math.round(fit.mle.shape.value * 1000) / 1000).toBe(2.102)
    expect(Math.round(fit.mle.scale.value * 100) / 100).toBe(81.88)
  })

  it.each([
    ['complete ball bearing data', BALL_BEARINGS.map(failed)],
    ['failures with suspensions', CENSORED],
  ])('%s: agrees with a Nelder-Mead maximisation of the likelihood written with jstat', (_, units) => {
    const fit = fitMaximumLikelihood(units)!
    const [lnShape, lnScale] = nelderMeadMax((x) => jstatLogLikelihood(units, Math.exp(x[0]!), Math.exp(x[1]!)), [0, Math.log(50)])
    expect(fit.shape.value).toBeCloseTo(Math.exp(lnShape!), 4)
    expect(fit.scale.value / Math.exp(lnScale!)).toBeCloseTo(1, 6)
    expect(fit.logLikelihood).toBeCloseTo(jstatLogLikelihood(units, fit.shape.value, fit.scale.value), 8)
  })

  it('Fisher-matrix covariance is the inverse of the numerical Hessian of the jstat log-likelihood', () => {
    const fit = fitMaximumLikelihood(CENSORED)!
    const b = fit.shape.value
    const e = fit.scale.value
    const ll = (x: number, y: number) => jstatLogLikelihood(CENSORED, x, y)
    const hb = 1e-4 * b
    const he = 1e-4 * e
    const hBB = (ll(b + hb, e) - 2 * ll(b, e) + ll(b - hb, e)) / hb ** 2
    const hEE = (ll(b, e + he) - 2 * ll(b, e) + ll(b, e - he)) / he ** 2
    const hBE = (ll(b + hb, e + he) - ll(b + hb, e - he) - ll(b - hb, e + he) + ll(b - hb, e - he)) / (4 * hb * he)
    const det = hBB * hEE - hBE ** 2
    expect(fit.covariance[0][0] / (-hEE / det)).toBeCloseTo(1, 4)
    expect(fit.covariance[1][1] / (-hBB / det)).toBeCloseTo(1, 4)
    expect(fit.covariance[0][1] / (hBE / det)).toBeCloseTo(1, 4)
  })

  it('bounds: 90 % two-sided, log-normal on each parameter and on ln(B10) (Fisher matrix, delta method)', () => {
    const fit = fitMaximumLikelihood(CENSORED)!
    const z = 1.6448536 // standard normal 95th percentile (tables)
    const [[vBB, vBE], [, vEE]] = fit.covariance
    expect(fit.shape.upper).toBeCloseTo(fit.shape.value * Math.exp((z * Math.sqrt(vBB)) / fit.shape.value), 6)
    expect(fit.scale.lower).toBeCloseTo(fit.scale.value / Math.exp((z * Math.sqrt(vEE)) / fit.scale.value), 6)
    const k = Math.log(-Math.log(0.9))
    const d = [-k / fit.shape.value ** 2, 1 / fit.scale.value]
    const se = Math.sqrt(d[0]! ** 2 * vBB + d[1]! ** 2 * vEE + 2 * d[0]! * d[1]! * vBE)
    expect(fit.b10.upper).toBeCloseTo(fit.b10.value * Math.exp(z * se), 6)
    expect(fit.b10.lower).toBeLessThan(fit.b10.value)
    expect(fit.b1.value).toBeLessThan(fit.b10.value)
  })
})

describe('median-rank regression', () => {
  it('is the least-squares line of ln(life) on ln(-ln(1 - F)) with hand-worked ranks (simple-statistics)', () => {
    // Ranks as worked by hand above, with two more failures: 10 F, 20 S, 30 F, 40 F, 50 S, 60 F.
    // n = 6: 10: 7/7 = 1; 30: (7 - 1) / 5 = 1.2 -> 2.2; 40: (7 - 2.2) / 4 = 1.2 -> 3.4; 60: (7 - 3.4) / 2 = 1.8 -> 5.2
    const units = [failed(10), suspended(20), failed(30), failed(40), suspended(50), failed(60)]
    const ranks = [1, 2.2, 3.4, 5.2]
    const lives = [10, 30, 40, 60]
    const pairs = ranks.map((r, i) => [Math.log(-Math.log(1 - (r - 0.3) / 6.4)), Math.log(lives[i]!)])
    const line = ss.linearRegression(pairs)
    const fit = fitMedianRankRegression(units)
    expect(fit.shape).toBeCloseTo(1 / line.m, 10)
    expect(fit.scale).toBeCloseTo(Math.exp(line.b), 8)
    expect(fit.r2).toBeCloseTo(ss.sampleCorrelation(pairs.map((p) => p[0]!), pairs.map((p) => p[1]!)) ** 2, 10)
  })

  it('recovers a straight line exactly: lives placed at the Weibull quantiles of their median ranks', () => {
    // shape 2.5, scale 100: t_i = 100 (-ln(1 - F_i))^(1 / 2.5) with F_i Benard's for n = 8
    const lives = [1, 2, 3, 4, 5, 6, 7, 8].map((i) => 100 * Math.pow(-Math.log(1 - (i - 0.3) / 8.4), 1 / 2.5))
    const fit = fitMedianRankRegression(lives.map(failed))
    expect(fit.shape).toBeCloseTo(2.5, 10)
    expect(fit.scale).toBeCloseTo(100, 8)
    expect(fit.r2).toBeCloseTo(1, 12)
  })
})

describe('B lives and axes', () => {
  it('B10 = scale (-ln 0.9)^(1 / shape); axis transform round-trips', () => {
    // shape 2, scale 100: 100 * sqrt(0.1053605) = 32.459
    expect(bLife(0.1, 2, 100)).toBeCloseTo(32.4593, 4)
    expect(bLife(0.01, 1, 100)).toBeCloseTo(1.00503, 5)
    expect(unreliabilityAtAxisY(weibullAxisY(0.3))).toBeCloseTo(0.3, 12)
    // 1 - 1/e = 0.632... sits at y = 0 on Weibull axes: the scale is the life at 63.2 %
    expect(weibullAxisY(1 - Math.exp(-1))).toBeCloseTo(0, 12)
  })

  it('normal quantile: 1.644854 at 0.95, 1.959964 at 0.975 (standard normal tables)', () => {
    expect(normalQuantile(0.95)).toBeCloseTo(1.644854, 6)
    expect(normalQuantile(0.975)).toBeCloseTo(1.959964, 6)
  })
})

describe('no fit', () => {
  it('all suspensions: no fit, and says why', () => {
    const answer = fitWeibull([suspended(12), suspended(30), suspended(41)])
    expect(answer.fitted).toBe(false)
    if (answer.fitted) return
    expect(answer.reason).toBe('no-failures')
    expect(answer.message).toContain('All 3 units are suspensions')
    expect(answer.failures).toBe(0)
  })

  it(`fewer than ${MIN_FAILURES} failures: no fit, and says how many there are`, () => {
    const answer = fitWeibull([failed(12), suspended(30), failed(41), suspended(50)])
    expect(answer.fitted).toBe(false)
    if (answer.fitted) return
    expect(answer.reason).toBe('too-few-failures')
    expect(answer.message).toContain('2 failures of 4 units')
  })

  it('failures all at one life: no shape can be estimated', () => {
    const answer = fitWeibull([failed(20), failed(20), failed(20), suspended(10)])
    expect(answer.fitted ? 'fitted' : answer.reason).toBe('no-spread')
  })

  it('no units: nothing to fit; a life of zero is refused', () => {
    expect(fitWeibull([]).fitted).toBe(false)
    expect(() => fitWeibull([failed(0), failed(2), failed(3)])).toThrow(RangeError)
  })
})
