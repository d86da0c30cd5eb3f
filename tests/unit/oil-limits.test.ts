import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics' // the ESM build has no default export
import {
  DEFAULT_OIL_LIMITS,
  OIL_ELEMENTS,
  assessSample,
  hoursBetween,
  mean,
  percentile,
  populationLimits,
  sampleSd,
  worstOilStatus,
  type OilLimits,
  type OilSampleValues,
} from '../../shared/domain/oil/limits'
import { oilSampleSchema } from '../../shared/domain/oil/schema'
import { OilLimitsSchema } from '../../shared/schemas/oil'
import { downgradeLimits, upgradeLimits } from '../../db/migrations/20261203_03_c_oil_new_reference'

const HAND = [10, 12, 14, 16, 18]

/** Small seeded generator so the cross-checks are repeatable. */
function lcg(seed: number): () => number {
  let s = seed >>> 0
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0
    return s / 2 ** 32
  }
}

function sample(id: string, over: Partial<OilSampleValues> = {}): OilSampleValues {
  return {
    sampleId: id,
    sampledAt: '2025-05-01',
    engineHours: null,
    oilHours: null,
    elements: {},
    kv40: null,
    kv100: null,
    hths: null,
    fuelDilutionPct: null,
    waterPct: null,
    p4: null,
    p6: null,
    p14: null,
    grade: null,
    ...over,
  }
}

describe('statistics', () => {
  it('hand data {10,12,14,16,18}: mean 14, sample s 3.1623, mean + 2s 20.325, mean + 3s 23.487 (derived)', () => {
    expect(mean(HAND)).toBe(14)
    expect(sampleSd(HAND)).toBeCloseTo(3.1623, 4)
    expect(mean(HAND) + 2 * sampleSd(HAND)).toBeCloseTo(20.325, 3)
    expect(mean(HAND) + 3 * sampleSd(HAND)).toBeCloseTo(23.487, 3)
  })

  it('hand data: 90th percentile 17.2 by linear interpolation, 18 by nearest rank (derived)', () => {
    expect(percentile(HAND, 90, 'linear')).toBeCloseTo(17.2, 12)
    expect(percentile(HAND, 90, 'nearest-rank')).toBe(18)
  })

  it('mean and sample sd agree with simple-statistics on random data', () => {
    const rnd = lcg(7)
    for (let k = 0; k < 50; k++) {
      const xs = Array.from({ length: 2 + Math.floor(rnd() * 60) }, () => rnd() * 200 - 20)
      expect(mean(xs)).toBeCloseTo(ss.mean(xs), 9)
      expect(sampleSd(xs)).toBeCloseTo(ss.sampleStandardDeviation(xs), 9)
    }
  })

  it('linear percentile agrees with simple-statistics quantile (type 7) on random data', () => {
    const rnd = lcg(11)
    for (let k = 0; k < 50; k++) {
      const xs = Array.from({ length: 1 + Math.floor(rnd() * 40) }, () => Math.round(rnd() * 1000) / 10)
      for (const p of [0, 5, 25, 50, 90, 95, 98, 100]) {
        expect(percentile(xs, p, 'linear')).toBeCloseTo(ss.quantile(xs, p / 100), 9)
      }
    }
  })

  it('nearest rank on {15, 20, 35, 40, 50}: 5th 15, 30th 20, 40th 20, 50th 35, 100th 50 (textbook nearest-rank example, from memory)', () => {
    const xs = [15, 20, 35, 40, 50]
    expect(percentile(xs, 5, 'nearest-rank')).toBe(15)
    expect(percentile(xs, 30, 'nearest-rank')).toBe(20)
    expect(percentile(xs, 40, 'nearest-rank')).toBe(20)
    expect(percentile(xs, 50, 'nearest-rank')).toBe(35)
    expect(percentile(xs, 100, 'nearest-rank')).toBe(50)
  })

  it('percentile does not reorder its input', () => {
    const xs = [18, 10, 14]
    percentile(xs, 50, 'linear')
    expect(xs).toEqual([18, 10, 14])
  })

  it('refuses empty data, one value for sd, and a percentile outside 0..100', () => {
    expect(() => mean([])).toThrow(RangeError)
    expect(() => sampleSd([3])).toThrow(RangeError)
    expect(() => percentile(HAND, 101, 'linear')).toThrow(RangeError)
    expect(() => mean([1, Number.NaN])).toThrow(RangeError)
  })
})

// A population of one engine type: Fe 25..45 ppm, Cu 3..5 ppm.
function population(n: number): OilSampleValues[] {
  return Array.from({ length: n }, (_, i) => sample(`P${i}`, { elements: { Fe: 25 + (i % 11) * 2, Cu: 3 + (i % 3) } }))
}

describe('populationLimits (statistical limits in the manner of ASTM D7720; method from memory)', () => {
  it('mean + 2 s caution and mean + 3 s critical, cross-checked with simple-statistics', () => {
    const pop = population(30)
    const fe = pop.map((s) => s.elements.Fe!)
    const lims = populationLimits(pop, DEFAULT_OIL_LIMITS)
    const feLim = lims.find((l) => l.element === 'Fe')!
    expect(feLim.n).toBe(30)
    expect(feLim.mean).toBeCloseTo(ss.mean(fe), 9)
    expect(feLim.sd).toBeCloseTo(ss.sampleStandardDeviation(fe), 9)
    expect(feLim.caution).toBeCloseTo(ss.mean(fe) + 2 * ss.sampleStandardDeviation(fe), 9)
    expect(feLim.critical).toBeCloseTo(ss.mean(fe) + 3 * ss.sampleStandardDeviation(fe), 9)
    expect(feLim.active).toBe(true)
    // elements with no readings are left out
    expect(lims.map((l) => l.element)).toEqual(['Fe', 'Cu'])
  })

  it('is not active below minSamples (29 of 30)', () => {
    const lims = populationLimits(population(29), DEFAULT_OIL_LIMITS)
    expect(lims.every((l) => !l.active)).toBe(true)
    expect(lims.find((l) => l.element === 'Fe')!.n).toBe(29)
  })

  it('is not active when statistical limits are switched off', () => {
    const off: OilLimits = { ...DEFAULT_OIL_LIMITS, statistical: { ...DEFAULT_OIL_LIMITS.statistical, enabled: false } }
    expect(populationLimits(population(40), off).every((l) => !l.active)).toBe(true)
  })

  it('percentile method uses the configured percentiles, cross-checked with simple-statistics', () => {
    const pct: OilLimits = { ...DEFAULT_OIL_LIMITS, statistical: { ...DEFAULT_OIL_LIMITS.statistical, method: 'percentile', cautionPercentile: 90, criticalPercentile: 98 } }
    const pop = population(30)
    const fe = pop.map((s) => s.elements.Fe!)
    const feLim = populationLimits(pop, pct).find((l) => l.element === 'Fe')!
    expect(feLim.caution).toBeCloseTo(ss.quantile(fe, 0.9), 9)
    expect(feLim.critical).toBeCloseTo(ss.quantile(fe, 0.98), 9)
  })

  it('hand data as a population: caution 20.325, critical 23.487 (derived)', () => {
    const pop = HAND.map((fe, i) => sample(`H${i}`, { elements: { Fe: fe } }))
    const feLim = populationLimits(pop, DEFAULT_OIL_LIMITS)[0]!
    expect(feLim.caution).toBeCloseTo(20.325, 3)
    expect(feLim.critical).toBeCloseTo(23.487, 3)
    expect(feLim.active).toBe(false) // 5 samples, below 30
  })
})

describe('assessSample: a constructed sample history', () => {
  const activePop = populationLimits(population(30), DEFAULT_OIL_LIMITS)
  const inactivePop = populationLimits(population(29), DEFAULT_OIL_LIMITS)
  // slow rise of 4 ppm Fe per 10 h on one oil fill
  const history = [10, 20, 30, 40].map((h, i) => sample(`S${i + 1}`, { engineHours: 100 + h, oilHours: h, elements: { Fe: 30 + 4 * i } }))

  it('a slow rise stays normal, even against an active population', () => {
    for (let i = 0; i < history.length; i++) {
      const a = assessSample(history[i]!, i > 0 ? history[i - 1]! : null, DEFAULT_OIL_LIMITS, activePop)
      expect(a.status).toBe('normal')
      expect(a.reasons).toEqual([])
    }
  })

  it('a jump trips the rate limit, naming the element and the limit', () => {
    // Fe 42 -> 75 ppm over 10 oil hours = 33 ppm per 10 h; absolute 75 is under the caution level of 100
    const jump = sample('S5', { engineHours: 150, oilHours: 50, elements: { Fe: 75 } })
    const a = assessSample(jump, history[3]!, DEFAULT_OIL_LIMITS, inactivePop)
    expect(a.status).toBe('caution')
    expect(a.reasons).toHaveLength(1)
    const r = a.reasons[0]!
    expect(r).toMatchObject({ element: 'Fe', kind: 'rate', level: 'caution', limit: 20 })
    expect(r.value).toBeCloseTo(33, 9)
    expect(r.message).toBe('Fe rising 33 ppm per 10 h, above the caution rate of 20 ppm per 10 h')
  })

  it('a steeper jump trips the critical rate', () => {
    const jump = sample('S5', { engineHours: 145, oilHours: 45, elements: { Fe: 75 } })
    const a = assessSample(jump, history[3]!, DEFAULT_OIL_LIMITS, inactivePop)
    // 33 ppm in 5 h = 66 ppm per 10 h, above the critical 40
    expect(a.status).toBe('critical')
    expect(a.reasons[0]).toMatchObject({ element: 'Fe', kind: 'rate', level: 'critical', limit: 40 })
    expect(a.reasons[0]!.value).toBeCloseTo(66, 9)
  })

  it('the same jump against an active population also trips the statistical limit', () => {
    const jump = sample('S5', { engineHours: 150, oilHours: 50, elements: { Fe: 75 } })
    const a = assessSample(jump, history[3]!, DEFAULT_OIL_LIMITS, activePop)
    const stat = a.reasons.find((r) => r.kind === 'statistical')!
    // mean + 3 s of the population's iron, from simple-statistics rather than the product's own figures
    const fe = population(30).map((s) => s.elements.Fe!)
    expect(stat).toMatchObject({ element: 'Fe', level: 'critical', value: 75 })
    expect(stat.limit).toBeCloseTo(ss.mean(fe) + 3 * ss.sampleStandardDeviation(fe), 9)
    expect(a.status).toBe('critical')
  })

  it('an outlier under its absolute limit trips the statistical limit, naming the element and the limit', () => {
    const pop = population(30)
    const cu = pop.map((s) => s.elements.Cu!)
    const critical = ss.mean(cu) + 3 * ss.sampleStandardDeviation(cu)
    // Cu 15 ppm is below the absolute caution of 20 but far outside this engine type's population
    const a = assessSample(sample('X1', { elements: { Cu: 15 } }), null, DEFAULT_OIL_LIMITS, activePop)
    expect(a.status).toBe('critical')
    expect(a.reasons).toHaveLength(1)
    expect(a.reasons[0]).toMatchObject({ element: 'Cu', kind: 'statistical', level: 'critical', value: 15 })
    expect(a.reasons[0]!.limit).toBeCloseTo(critical, 9)
    expect(a.reasons[0]!.message).toBe(`Cu 15 ppm above the statistical critical limit of ${Number(critical.toPrecision(3))} ppm (mean + 3 s of 30 samples)`)
  })

  it('the same outlier is normal when the population is below minSamples', () => {
    const a = assessSample(sample('X1', { elements: { Cu: 15 } }), null, DEFAULT_OIL_LIMITS, inactivePop)
    expect(a.status).toBe('normal')
  })

  it('no rate across an oil change (oil hours went down)', () => {
    const afterChange = sample('S5', { engineHours: 150, oilHours: 5, elements: { Fe: 75 } })
    const a = assessSample(afterChange, history[3]!, DEFAULT_OIL_LIMITS, inactivePop)
    expect(a.reasons.filter((r) => r.kind === 'rate')).toEqual([])
    expect(a.status).toBe('normal')
  })

  it('no rate when the sample is flagged as after an oil change', () => {
    const flagged = sample('S5', { engineHours: 150, oilHours: 50, oilChanged: true, elements: { Fe: 75 } })
    expect(assessSample(flagged, history[3]!, DEFAULT_OIL_LIMITS, inactivePop).status).toBe('normal')
  })
})

describe('hoursBetween', () => {
  it('prefers oil hours, falls back to engine hours', () => {
    expect(hoursBetween(sample('b', { engineHours: 112, oilHours: 22 }), sample('a', { engineHours: 100, oilHours: 10 }))).toBe(12)
    expect(hoursBetween(sample('b', { engineHours: 112 }), sample('a', { engineHours: 100 }))).toBe(12)
  })

  it('null across an oil change or without hours', () => {
    // oil younger than the engine-hours gap
    expect(hoursBetween(sample('b', { engineHours: 130, oilHours: 15 }), sample('a', { engineHours: 100, oilHours: 10 }))).toBeNull()
    expect(hoursBetween(sample('b', { engineHours: 130, oilHours: 4 }), sample('a', { engineHours: 100 }))).toBeNull()
    expect(hoursBetween(sample('b'), sample('a'))).toBeNull()
    expect(hoursBetween(sample('b', { engineHours: 100 }), sample('a', { engineHours: 100 }))).toBeNull()
  })
})

describe('assessSample: absolute limits and the other checks', () => {
  it("Fe 142 ppm: 'Fe 142 ppm above the caution limit of 100 ppm' (demo limits, common practice)", () => {
    const a = assessSample(sample('A1', { elements: { Fe: 142 } }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.status).toBe('caution')
    expect(a.reasons).toEqual([{ element: 'Fe', kind: 'absolute', level: 'caution', value: 142, limit: 100, message: 'Fe 142 ppm above the caution limit of 100 ppm' }])
  })

  it('limits are exclusive: exactly at the caution level is normal', () => {
    expect(assessSample(sample('A1', { elements: { Fe: 100 } }), null, DEFAULT_OIL_LIMITS, []).status).toBe('normal')
  })

  it('above the critical level gives one critical reason, not a caution as well', () => {
    const a = assessSample(sample('A1', { elements: { Fe: 250 } }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.status).toBe('critical')
    expect(a.reasons).toHaveLength(1)
    expect(a.reasons[0]!.message).toBe('Fe 250 ppm above the critical limit of 200 ppm')
  })

  it('fuel dilution and water above their caution limits', () => {
    const a = assessSample(sample('A1', { fuelDilutionPct: 6.2, waterPct: 0.25 }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.status).toBe('caution')
    expect(a.reasons.map((r) => [r.element, r.kind, r.level, r.value, r.limit])).toEqual([
      ['fuel', 'absolute', 'caution', 6.2, 5],
      ['water', 'absolute', 'caution', 0.25, 0.1],
    ])
    expect(a.reasons[0]!.message).toBe('fuel dilution 6.2 % above the caution limit of 5 %')
  })

  it('KV100 outside the SAE grade gives a grade reason', () => {
    const a = assessSample(sample('A1', { kv40: 70, kv100: 11.0, grade: '5W-40' }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.gradeCheck).toEqual({ ok: false, min: 12.5, max: 16.3 })
    expect(a.reasons).toHaveLength(1)
    expect(a.reasons[0]).toMatchObject({ element: 'kv100', kind: 'grade', level: 'caution', value: 11, limit: 12.5 })
    expect(a.reasons[0]!.message).toContain('SAE 5W-40')
  })

  it('KV100 change from new oil beyond 15 % (common practice)', () => {
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: { grade: null, kv40: null, kv100: 14.0, tbn: null } }
    const a = assessSample(sample('A1', { kv100: 11.5 }), null, limits, [])
    expect(a.reasons).toHaveLength(1)
    // hand-worked: (11.5 - 14.0) / 14.0 = -2.5 / 14 = -17.857 %
    expect(a.reasons[0]).toMatchObject({ element: 'kv100', kind: 'change', level: 'caution', limit: 15 })
    expect(a.reasons[0]!.value).toBeCloseTo(-17.857, 3)
    expect(a.reasons[0]!.message).toBe('KV100 changed -17.9 % from new oil, beyond the caution limit of 15 %')
    // 12.6 is -1.4 / 14 = -10 %, within 15 %
    const within = assessSample(sample('A1', { kv100: 12.6 }), null, limits, [])
    expect(within.status).toBe('normal')
    expect(within.viscosityChange.kv100Pct).toBeCloseTo(-10, 9)
  })

  it('reports the ISO 4406 code, the viscosity index and the grade check', () => {
    const a = assessSample(
      sample('A1', { kv40: 73.3, kv100: 8.86, grade: '0W-20', p4: 3000, p6: 500, p14: 7, countedParticles: { p14: 12 } }),
      null, DEFAULT_OIL_LIMITS, [],
    )
    expect(a.iso4406).toBe('19/16/>=10')
    expect(a.viscosityIndex).toBe(92) // ASTM D2270 procedure A example, as reproduced
    expect(a.gradeCheck).toEqual({ ok: true, min: 6.9, max: 9.3 })
    expect(a.grade).toEqual({ grade: '0W-20', source: 'sample', edition: 'J300-2015' })
    // no HTHS measured, no new-oil reference: those checks do not run
    expect(a.hthsCheck).toBeNull()
    expect(a.viscosityChange).toEqual({ kv40Pct: null, kv100Pct: null })
    expect(a.status).toBe('normal')
  })

  it('viscosity index is null where it is not defined', () => {
    expect(assessSample(sample('A1', { kv40: 5, kv100: 1.5 }), null, DEFAULT_OIL_LIMITS, []).viscosityIndex).toBeNull()
    expect(assessSample(sample('A1', { kv40: 70 }), null, DEFAULT_OIL_LIMITS, []).viscosityIndex).toBeNull()
  })
})

// Change limits of common practice: KV40 caution above 25 %, KV100 above 15 % (either way).
describe('viscosity change from the new-oil reference (common practice: KV40 25 %, KV100 15 %)', () => {
  const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: { grade: null, kv40: 100.0, kv100: 14.0, tbn: 9.0 } }

  it('new KV40 100.0, sample 126.0: +26 %, above the 25 % caution (hand-worked)', () => {
    const a = assessSample(sample('V1', { kv40: 126.0 }), null, limits, [])
    expect(a.viscosityChange.kv40Pct).toBeCloseTo(26, 9)
    expect(a.status).toBe('caution')
    expect(a.reasons).toHaveLength(1)
    expect(a.reasons[0]).toMatchObject({ element: 'kv40', kind: 'change', level: 'caution', limit: 25 })
    expect(a.reasons[0]!.value).toBeCloseTo(26, 9)
    expect(a.reasons[0]!.message).toBe('KV40 changed +26 % from new oil, beyond the caution limit of 25 %')
  })

  it('new KV40 100.0, sample 125.0: +25 %, at the limit, which is not beyond it', () => {
    const a = assessSample(sample('V2', { kv40: 125.0 }), null, limits, [])
    expect(a.viscosityChange.kv40Pct).toBeCloseTo(25, 9)
    expect(a.status).toBe('normal')
  })

  it('new KV40 100.0, sample 74.0: -26 %, thinner counts as well (hand-worked)', () => {
    const a = assessSample(sample('V3', { kv40: 74.0 }), null, limits, [])
    expect(a.reasons[0]!.value).toBeCloseTo(-26, 9)
    expect(a.reasons[0]!.message).toBe('KV40 changed -26 % from new oil, beyond the caution limit of 25 %')
  })

  it('both figures at once: KV40 130.0 (+30 %) and KV100 16.8 (+20 %) give two reasons (hand-worked)', () => {
    const a = assessSample(sample('V4', { kv40: 130.0, kv100: 16.8 }), null, limits, [])
    expect(a.viscosityChange.kv40Pct).toBeCloseTo(30, 9)
    expect(a.viscosityChange.kv100Pct).toBeCloseTo(20, 9)
    expect(a.reasons.map((r) => [r.element, r.kind, r.limit])).toEqual([['kv40', 'change', 25], ['kv100', 'change', 15]])
  })

  it('a demo-like sample: new 92.0 / 14.6, sample 89.7 / 14.2 gives -2.5 % and -2.74 %, normal (hand-worked)', () => {
    const ref: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: { grade: '5W-40', kv40: 92.0, kv100: 14.6, tbn: 8.2 } }
    const a = assessSample(sample('V5', { kv40: 89.7, kv100: 14.2 }), null, ref, [])
    // -2.3 / 92 = -0.025; -0.4 / 14.6 = -0.027397
    expect(a.viscosityChange.kv40Pct).toBeCloseTo(-2.5, 9)
    expect(a.viscosityChange.kv100Pct).toBeCloseTo(-2.7397, 4)
    expect(a.status).toBe('normal')
  })

  it('no change figure without the reference figure or the sample figure; no reason without a limit', () => {
    expect(assessSample(sample('V6', { kv40: 126 }), null, DEFAULT_OIL_LIMITS, []).viscosityChange).toEqual({ kv40Pct: null, kv100Pct: null })
    const onlyKv100: OilLimits = { ...limits, newOil: { grade: null, kv40: null, kv100: 14.0, tbn: null } }
    expect(assessSample(sample('V7', { kv40: 126, kv100: 14.7 }), null, onlyKv100, []).viscosityChange.kv40Pct).toBeNull()
    const noLimit: OilLimits = { ...limits, kv40ChangeCautionPct: null }
    const a = assessSample(sample('V8', { kv40: 126 }), null, noLimit, [])
    expect(a.viscosityChange.kv40Pct).toBeCloseTo(26, 9)
    expect(a.reasons).toEqual([])
  })
})

// HTHS minimums at 150 C from SAE J300 (as reproduced in check-values.md).
describe('HTHS against the SAE J300 minimum of the grade in the assessment', () => {
  it('5W-40 on the sample, HTHS 3.4 mPa s: below the 3.5 minimum, a caution naming grade and minimum', () => {
    const a = assessSample(sample('H1', { grade: '5W-40', hths: 3.4 }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.hthsCheck).toEqual({ ok: false, min: 3.5 })
    expect(a.status).toBe('caution')
    expect(a.reasons).toEqual([{ element: 'hths', kind: 'grade', level: 'caution', value: 3.4, limit: 3.5, message: 'HTHS 3.4 mPa·s below the SAE 5W-40 minimum of 3.5 mPa·s (SAE J300)' }])
  })

  it('5W-40, HTHS 3.5: the minimum itself passes', () => {
    const a = assessSample(sample('H2', { grade: '5W-40', hths: 3.5 }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.hthsCheck).toEqual({ ok: true, min: 3.5 })
    expect(a.status).toBe('normal')
  })

  it('a sample without a grade is judged by the engine type\'s grade from the new-oil reference (15W-40: 3.7)', () => {
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: { grade: '15W-40', kv40: null, kv100: null, tbn: null } }
    const a = assessSample(sample('H3', { hths: 3.6, kv100: 14.0 }), null, limits, [])
    expect(a.grade).toEqual({ grade: '15W-40', source: 'engine type', edition: 'J300-2015' })
    expect(a.hthsCheck).toEqual({ ok: false, min: 3.7 })
    expect(a.gradeCheck).toEqual({ ok: true, min: 12.5, max: 16.3 })
    expect(a.reasons.map((r) => r.message)).toEqual(["HTHS 3.6 mPa·s below the engine type's SAE 15W-40 minimum of 3.7 mPa·s (SAE J300)"])
  })

  it('the sample\'s own grade wins over the engine type\'s: 10W-40 needs 3.5, so 3.6 passes', () => {
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: { grade: '15W-40', kv40: null, kv100: null, tbn: null } }
    const a = assessSample(sample('H4', { grade: '10W-40', hths: 3.6 }), null, limits, [])
    expect(a.grade!.source).toBe('sample')
    expect(a.hthsCheck).toEqual({ ok: true, min: 3.5 })
  })

  it('no grade anywhere: no HTHS check', () => {
    const a = assessSample(sample('H5', { hths: 1.0 }), null, DEFAULT_OIL_LIMITS, [])
    expect(a.grade).toBeNull()
    expect(a.hthsCheck).toBeNull()
    expect(a.status).toBe('normal')
  })

  it('KV100 out of the engine type\'s grade when the sample gives none (0W-30: 9.3 to below 12.5)', () => {
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: { grade: '0W-30', kv40: null, kv100: null, tbn: null } }
    const a = assessSample(sample('H6', { kv100: 9.1 }), null, limits, [])
    expect(a.gradeCheck).toEqual({ ok: false, min: 9.3, max: 12.5 })
    expect(a.reasons[0]!.message).toBe("KV100 9.1 mm²/s below the engine type's SAE 0W-30 minimum of 9.3 mm²/s")
  })
})

describe('worstOilStatus', () => {
  it('orders normal < caution < critical', () => {
    expect(worstOilStatus([])).toBe('normal')
    expect(worstOilStatus(['normal', 'caution'])).toBe('caution')
    expect(worstOilStatus(['caution', 'critical', 'normal'])).toBe('critical')
  })
})

describe('DEFAULT_OIL_LIMITS (demo defaults, common practice for petrol engines)', () => {
  it('holds the caution levels of common practice', () => {
    const caution = Object.fromEntries(Object.entries(DEFAULT_OIL_LIMITS.elements).map(([k, v]) => [k, v!.caution]))
    expect(caution).toEqual({ Fe: 100, Cr: 10, Cu: 20, Sn: 10, Al: 20, Pb: 25, Si: 20, B: 20 })
    expect(DEFAULT_OIL_LIMITS.fuelDilutionCautionPct).toBe(5)
    expect(DEFAULT_OIL_LIMITS.waterCautionPct).toBe(0.1)
    expect(DEFAULT_OIL_LIMITS.kv100ChangeCautionPct).toBe(15)
    expect(DEFAULT_OIL_LIMITS.kv40ChangeCautionPct).toBe(25)
    expect(DEFAULT_OIL_LIMITS.newOil).toBeNull()
    expect(DEFAULT_OIL_LIMITS.statistical).toMatchObject({ minSamples: 30, method: 'sigma', cautionSigma: 2, criticalSigma: 3 })
  })

  it('names only known elements', () => {
    for (const k of Object.keys(DEFAULT_OIL_LIMITS.elements)) expect(OIL_ELEMENTS).toContain(k)
  })
})

describe('oilSampleSchema', () => {
  const ctx = { now: new Date('2025-06-01T12:00:00Z'), builtAt: new Date('2025-01-15T00:00:00Z') }
  const schema = oilSampleSchema(ctx)
  const good = {
    sampleId: 'DEMO-0042',
    sampledAt: '2025-05-30',
    engineHours: 112.5,
    oilHours: 12.5,
    elements: { Fe: 42, Cu: 6, Si: 9 },
    kv40: 73.3,
    kv100: 8.86,
    fuelDilutionPct: 1.2,
    waterPct: 0.02,
    p4: 3000,
    p6: 500,
    p14: 7,
    hths: 3.1,
    grade: '5W-30',
  }

  function issues(input: unknown): { path: string; message: string }[] {
    const r = schema.safeParse(input)
    expect(r.success).toBe(false)
    return r.error!.issues.map((i) => ({ path: i.path.join('.'), message: i.message }))
  }

  it('accepts a complete sample entered by form', () => {
    const r = schema.parse(good)
    expect(r).toEqual(good)
  })

  it('accepts a lab CSV row: strings, blanks and flat element columns', () => {
    const r = schema.parse({
      sampleId: ' DEMO-0043 ', sampledAt: '2025-05-31', engineHours: '120', oilHours: '', Fe: '48', Cu: '', Al: '3.5',
      kv40: '70.1', kv100: '8.7', fuelDilutionPct: '', waterPct: '', p4: '', p6: '', p14: '', grade: '',
    })
    expect(r).toMatchObject({ sampleId: 'DEMO-0043', engineHours: 120, oilHours: null, elements: { Fe: 48, Al: 3.5 }, kv40: 70.1, kv100: 8.7, grade: null, p4: null })
    expect(r.elements).not.toHaveProperty('Cu')
  })

  it('refuses a negative ppm, naming the element', () => {
    const e = issues({ ...good, elements: { Fe: -3 } })
    expect(e).toHaveLength(1)
    expect(e[0]!.path).toBe('elements.Fe')
    expect(e[0]!.message).toMatch(/^Fe /)
  })

  it('refuses an absurd ppm above 100000, naming the element', () => {
    const e = issues({ ...good, elements: { Pb: 100001 } })
    expect(e[0]).toEqual({ path: 'elements.Pb', message: 'Pb must be at most 100000 ppm' })
    expect(schema.safeParse({ ...good, elements: { Pb: 100000 } }).success).toBe(true)
  })

  it('refuses text in a number field, naming the field', () => {
    const e = issues({ ...good, kv40: 'seventy' })
    expect(e[0]!.path).toBe('kv40')
    expect(e[0]!.message).toMatch(/kv40/)
  })

  it('refuses kv100 >= kv40, on the kv100 field', () => {
    const e = issues({ ...good, kv40: 8.86, kv100: 8.86 })
    expect(e).toHaveLength(1)
    expect(e[0]!.path).toBe('kv100')
    expect(e[0]!.message).toMatch(/kv100.*kv40/)
  })

  it('refuses a sample dated after now, and one before the engine was built', () => {
    const future = issues({ ...good, sampledAt: '2025-06-02' })
    expect(future).toEqual([{ path: 'sampledAt', message: 'sampledAt cannot be in the future' }])
    const early = issues({ ...good, sampledAt: '2025-01-10' })
    expect(early).toEqual([{ path: 'sampledAt', message: 'sampledAt cannot be before the engine was built' }])
    expect(issues({ ...good, sampledAt: 'last tuesday' })[0]!.path).toBe('sampledAt')
    // without a build date only the future is refused
    expect(oilSampleSchema({ now: ctx.now, builtAt: null }).safeParse({ ...good, sampledAt: '2024-01-10' }).success).toBe(true)
  })

  it('refuses an HTHS of zero or above 100 mPa s, naming the field; a blank HTHS is no reading', () => {
    expect(issues({ ...good, hths: 0 })[0]).toEqual({ path: 'hths', message: 'hths must be greater than 0 mPa·s' })
    expect(issues({ ...good, hths: 350 })[0]).toEqual({ path: 'hths', message: 'hths must be at most 100 mPa·s' })
    expect(issues({ ...good, hths: 'thick' })[0]!.path).toBe('hths')
    expect(schema.parse({ ...good, hths: '' }).hths).toBeNull()
    expect(schema.parse({ ...good, hths: ' 3.55 ' }).hths).toBe(3.55)
  })

  it('refuses oil hours above engine hours, negative hours and an unknown grade', () => {
    expect(issues({ ...good, oilHours: 200 })[0]!.path).toBe('oilHours')
    expect(issues({ ...good, engineHours: -1 })[0]).toEqual({ path: 'engineHours', message: 'engineHours cannot be below 0 h' })
    expect(issues({ ...good, grade: '5W-45' })[0]!.path).toBe('grade')
  })

  it('refuses particle counts that are not cumulative, and percentages over 100', () => {
    expect(issues({ ...good, p6: 4000 })[0]!.path).toBe('p6')
    expect(issues({ ...good, p14: 600 })[0]!.path).toBe('p14')
    expect(issues({ ...good, waterPct: 101 })[0]).toEqual({ path: 'waterPct', message: 'waterPct must be at most 100 %' })
  })

  it('refuses a missing sample id', () => {
    expect(issues({ ...good, sampleId: '  ' })[0]).toEqual({ path: 'sampleId', message: 'sampleId is required' })
  })
})

describe('stored limits written before the new-oil reference', () => {
  it('upgrade: the new oil KV100 moves into the reference, the KV40 limit takes 25 % (common practice), and the result reads as limits', () => {
    const { newOilKv100: _old, newOil: _n, kv40ChangeCautionPct: _k, ...rest } = { ...DEFAULT_OIL_LIMITS, newOilKv100: 14.2 } as Record<string, unknown>
    const old = { ...rest, newOilKv100: 14.2 }
    const upgraded = upgradeLimits(old)
    expect(upgraded).not.toHaveProperty('newOilKv100')
    expect(upgraded.newOil).toEqual({ grade: null, kv40: null, kv100: 14.2, tbn: null })
    expect(upgraded.kv40ChangeCautionPct).toBe(25)
    expect(OilLimitsSchema.safeParse(upgraded).success).toBe(true)
    expect(upgradeLimits({ ...rest, newOilKv100: null }).newOil).toBeNull()
    // already upgraded: unchanged
    expect(upgradeLimits(upgraded)).toEqual(upgraded)
    expect(downgradeLimits(upgraded)).toEqual(old)
  })
})

describe('OilLimitsSchema: the new-oil reference', () => {
  const base = { ...DEFAULT_OIL_LIMITS, elements: {}, statistical: { ...DEFAULT_OIL_LIMITS.statistical } }
  const issuesOf = (newOil: unknown) => {
    const r = OilLimitsSchema.safeParse({ ...base, newOil })
    return r.success ? [] : r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`)
  }

  it('accepts a full reference, a partial one and none; an empty grade is no grade', () => {
    expect(issuesOf({ grade: '5W-40', kv40: 92, kv100: 14.6, tbn: 8.2 })).toEqual([])
    expect(issuesOf({ grade: null, kv40: null, kv100: 14.6, tbn: null })).toEqual([])
    expect(issuesOf(null)).toEqual([])
    expect(OilLimitsSchema.parse({ ...base, newOil: { grade: '', kv40: 92, kv100: 14.6, tbn: null } }).newOil!.grade).toBeNull()
  })

  it('names the field of a bad reference', () => {
    expect(issuesOf({ grade: '5W-45', kv40: 92, kv100: 14.6, tbn: null })).toEqual(['newOil.grade: grade must be an SAE J300 grade such as 5W-40 or 40'])
    expect(issuesOf({ grade: null, kv40: 14, kv100: 14.6, tbn: null })).toEqual(['newOil.kv100: kv100 must be lower than kv40: oil thins as it warms'])
    expect(issuesOf({ grade: null, kv40: -1, kv100: null, tbn: null })).toEqual(['newOil.kv40: kv40 must be positive'])
    expect(issuesOf({ grade: null, kv40: null, kv100: null, tbn: 'nine' })).toEqual(['newOil.tbn: tbn must be a number of mg KOH/g'])
  })
})
