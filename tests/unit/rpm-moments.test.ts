// Exact equivalent hours: what a stored session keeps must give the per-sample integral
//   sum dt * (rpm / rpm_ref)^p   (Palmgren-Miner with Basquin's S-N line, Shigley's fatigue chapter)
// for any exponent and reference rpm. The expected values are computed in this file by a plain loop
// over the samples (the trace's time step rule: a step takes the rpm of the sample that starts it),
// or by hand, never with the product's evaluation.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { analyzeTrace, type TraceConfig, type TraceSample } from '../../shared/domain/trace'
import { sessionEquivalentHours } from '../../shared/domain/life'
import {
  DELTA,
  decodeMoments,
  encodeMoments,
  eqCacheKey,
  eqCacheOf,
  equivalentHoursFromMoments,
  histogramEqHoursBounds,
  momentsOfSegments,
  momentsRelativeErrorBound,
} from '../../shared/domain/rpm-moments'
import { LOW_OIL_CHECK_OFF, makeTraceConfig } from '../../db/fixtures'

const CFG: TraceConfig = makeTraceConfig({ idleRpm: 1500, bandWidthRpm: 500, maxGapS: 1, overRevBands: [], lowOilPressure: LOW_OIL_CHECK_OFF })

/** The definition, written out: every step dt at the rpm of the sample that starts it, above idle, gaps excluded. */
function perSampleIntegral(samples: TraceSample[], ref: number, p: number, cfg = CFG): number {
  let total = 0
  for (let k = 1; k < samples.length; k++) {
    const dt = samples[k]!.t - samples[k - 1]!.t
    const rpm = samples[k - 1]!.rpm
    if (dt > cfg.maxGapS || !(rpm > cfg.idleRpm)) continue
    total += dt * Math.pow(rpm / ref, p)
  }
  return total / 3600
}

/** What the ledger evaluates: the analyzer's moments, through the stored (binary) form. */
function storedSessionEqHours(samples: TraceSample[], ref: number, p: number): number {
  const summary = analyzeTrace(CFG, samples)
  const stored = decodeMoments(encodeMoments(summary.rpmMoments))
  return equivalentHoursFromMoments(stored, ref, p)
}

function steady(t0: number, seconds: number, hz: number, rpm: number): TraceSample[] {
  const n = Math.round(seconds * hz)
  return Array.from({ length: n }, (_, k) => ({ t: t0 + k / hz, rpm }))
}

function ramp(t0: number, seconds: number, hz: number, from: number, to: number): TraceSample[] {
  const n = Math.round(seconds * hz)
  return Array.from({ length: n }, (_, k) => ({ t: t0 + k / hz, rpm: from + ((to - from) * k) / n }))
}

// A hand-made trace on an engine type with 500 rpm bands: steady running at, just below and just above
// the 8,500 rpm band edge, and a ramp across several bands (10 Hz, times in seconds).
const TRACE: TraceSample[] = [
  ...steady(0, 600, 10, 8500), // on the band edge
  ...steady(600, 600, 10, 8499), // just below it
  ...steady(1200, 600, 10, 8501), // just above it
  ...ramp(1800, 900, 10, 5200, 9150), // across eight bands
  ...steady(2700, 300, 10, 8999),
  { t: 3000, rpm: 1000 },
]

describe('stored session equivalent hours against the per-sample integral (within 0.1 %)', () => {
  for (const ref of [8500, 8250]) {
    const where = ref === 8500 ? 'reference on a band edge' : 'reference inside a band'
    for (const p of [0, 7, 13, 19]) {
      it(`p = ${p}, ${where} (${ref} rpm)`, () => {
        const exact = perSampleIntegral(TRACE, ref, p)
        const stored = storedSessionEqHours(TRACE, ref, p)
        expect(Math.abs(stored - exact) / exact).toBeLessThan(1e-3)
        // and within the stated bound of the method
        expect(Math.abs(stored - exact) / exact).toBeLessThanOrEqual(momentsRelativeErrorBound(p) + 1e-12)
      })
    }
  }

  it('any trace, exponent 0..20 and reference rpm: within the stated bound (property)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.record({ rpm: fc.double({ min: 1600, max: 12_000, noNaN: true }), dt: fc.double({ min: 0.001, max: 1, noNaN: true }) }), { minLength: 2, maxLength: 200 }),
        fc.double({ min: 0, max: 20, noNaN: true }),
        fc.integer({ min: 3000, max: 12_000 }),
        (steps, p, ref) => {
          let t = 0
          const samples = steps.map((s) => {
            const sample = { t, rpm: s.rpm }
            t += s.dt
            return sample
          })
          const exact = perSampleIntegral(samples, ref, p)
          const stored = storedSessionEqHours(samples, ref, p)
          expect(Math.abs(stored - exact)).toBeLessThanOrEqual(exact * (momentsRelativeErrorBound(p) + 1e-9))
        },
      ),
      { numRuns: 200 },
    )
  })

  it('the bound is 2.0e-4 at the largest exponent a part type may have (p = 20, bins of 1 % of rpm)', () => {
    expect(DELTA).toBe(0.01)
    // x = 20 x 0.005 = 0.1: x^3 / 6 x e^(2x) = 1.6667e-4 x 1.2214 = 2.036e-4, by hand
    expect(momentsRelativeErrorBound(20)).toBeCloseTo(2.036e-4, 7)
    expect(momentsRelativeErrorBound(0)).toBe(0)
  })
})

describe('steady hours with known answers (check values section 3 [derived])', () => {
  it('one steady hour at the reference rpm is 1 eq h at any exponent, also on a band edge', () => {
    const m = momentsOfSegments([{ rpm: 8500, seconds: 3600 }])
    for (const p of [0, 7, 13, 19]) expect(Math.abs(equivalentHoursFromMoments(m, 8500, p) - 1)).toBeLessThanOrEqual(momentsRelativeErrorBound(p))
  })

  it('one hour at 8,999 rpm, reference 8,500, p = 13: (8999 / 8500)^13 = 2.0993 eq h (the midpoint of [8,500, 9,000) gives 1.46)', () => {
    const m = momentsOfSegments([{ rpm: 8999, seconds: 3600 }])
    expect(equivalentHoursFromMoments(m, 8500, 13)).toBeCloseTo(2.0993, 4)
  })

  it('one hour at 8,499 rpm, reference 8,500, p = 13: 0.9985 eq h', () => {
    expect(equivalentHoursFromMoments(momentsOfSegments([{ rpm: 8499, seconds: 3600 }]), 8500, 13)).toBeCloseTo(0.9985, 4)
  })

  // 1 h at 6,000, 2 h at 7,000, 0.5 h at 8,000 rpm, reference 8,000 rpm
  const worked = momentsOfSegments([
    { rpm: 6000, seconds: 3600 },
    { rpm: 7000, seconds: 7200 },
    { rpm: 8000, seconds: 1800 },
  ])
  const table: [m: number, p: number, eq: number][] = [
    [3, 7, 1.4189],
    [6, 13, 0.8762],
    [9, 19, 0.6624],
  ]
  for (const [m, p, eq] of table) {
    it(`S-N slope m = ${m}, p = ${p}: ${eq} eq h (1e-4)`, () => {
      expect(Math.abs(equivalentHoursFromMoments(worked, 8000, p) - eq)).toBeLessThanOrEqual(1e-4)
    })
  }

  it('p = 0 gives the plain running hours (3.5 h)', () => {
    expect(equivalentHoursFromMoments(worked, 8000, 0)).toBeCloseTo(3.5, 12)
  })
})

describe('a change of exponent or reference rpm needs no raw file', () => {
  it('the same stored moments answer for p = 7 and p = 19 and a reference moved by 300 rpm, each against the per-sample integral', () => {
    const stored = decodeMoments(encodeMoments(analyzeTrace(CFG, TRACE).rpmMoments))
    for (const [ref, p] of [[8500, 7], [8800, 19], [8200, 13]] as const) {
      const exact = perSampleIntegral(TRACE, ref, p)
      expect(Math.abs(equivalentHoursFromMoments(stored, ref, p) - exact) / exact).toBeLessThan(1e-3)
    }
  })

  it('refuses stored moments of the wrong length', () => {
    expect(() => decodeMoments(new Uint8Array(20))).toThrow(RangeError)
  })
})

describe('a session entered by hand: band data only, an approximation with stated bounds', () => {
  it('one hour in [8,000, 8,500) at reference 8,500, p = 13: between (8000/8500)^13 and 1, midpoint (8250/8500)^13', () => {
    const h = Array(17).fill(0)
    h[16] = 3600
    const b = histogramEqHoursBounds(h, 500, 8500, 13)
    // by hand: (16/17)^13 = 0.454699, (33/34)^13 = 0.678352
    expect(b.low).toBeCloseTo(0.454699, 5)
    expect(b.mid).toBeCloseTo(0.678352, 5)
    expect(b.high).toBeCloseTo(1, 12)
  })
})

describe('a fleet computation reads cached exact figures, never band midpoints for an exact session', () => {
  const moments = momentsOfSegments([{ rpm: 8999, seconds: 3600 }])
  const base = { sessionId: 7, runningSeconds: 3600, histogram: [], rpmMoments: null, exact: true }
  const cfg = { referenceRpm: 8500, bandWidthRpm: 500 }

  it('takes the cached value of the pair asked for; the cache holds what the moments give, (8999/8500)^13 = 2.0993 by hand', () => {
    const cache = eqCacheOf(moments, 8500, [13])
    expect(cache[eqCacheKey(13, 8500)]).toBeCloseTo(2.0993, 4)
    expect(sessionEquivalentHours({ ...base, eqHoursCache: cache }, cfg, 13)).toBe(cache['13@8500'])
  })

  it('exponent 0 is the plain running time', () => {
    expect(sessionEquivalentHours({ ...base, eqHoursCache: {} }, cfg, 0)).toBe(1)
  })

  it('refuses to answer when the pair was not loaded, instead of falling back to band midpoints', () => {
    expect(() => sessionEquivalentHours({ ...base, histogram: [0, 3600], eqHoursCache: { '13@8000': 1 } }, cfg, 13)).toThrow(/were not loaded/)
  })
})
