import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics' // the ESM build has no default export
import { DEFAULT_OIL_LIMITS, type OilLimits, type OilSampleValues } from '../../shared/domain/oil/limits'
import { assessEngineHistory, assessLatest, leaveOneOutLimits, populationLimitsExcluding, sortSamples } from '../../shared/domain/oil/history'

function sample(id: string, over: Partial<OilSampleValues> = {}): OilSampleValues {
  return {
    sampleId: id, sampledAt: '2026-06-01', engineHours: null, oilHours: null, elements: {},
    kv40: null, kv100: null, hths: null, fuelDilutionPct: null, waterPct: null, p4: null, p6: null, p14: null, grade: null,
    ...over,
  }
}

const NO_STATS: OilLimits = { ...DEFAULT_OIL_LIMITS, statistical: { ...DEFAULT_OIL_LIMITS.statistical, enabled: false } }

describe('sortSamples', () => {
  it('orders by date, then by engine hours for the same moment', () => {
    const out = sortSamples([
      sample('c', { sampledAt: '2026-06-03' }),
      sample('b2', { sampledAt: '2026-06-02', engineHours: 20 }),
      sample('b1', { sampledAt: '2026-06-02', engineHours: 10 }),
      sample('a', { sampledAt: '2026-06-01' }),
    ])
    expect(out.map((s) => s.sampleId)).toEqual(['a', 'b1', 'b2', 'c'])
  })
})

describe('assessEngineHistory (cases built with known answers)', () => {
  // Default iron limits: caution 100 / critical 200 ppm, rate caution 20 / critical 40 ppm per 10 h.
  const history = [
    sample('s3', { sampledAt: '2026-06-03', engineHours: 25, oilHours: 25, elements: { Fe: 60 } }),
    sample('s1', { sampledAt: '2026-06-01', engineHours: 10, oilHours: 10, elements: { Fe: 20 } }),
    sample('s2', { sampledAt: '2026-06-02', engineHours: 20, oilHours: 20, elements: { Fe: 25 } }),
  ]

  it('reads each rate from the sample before it, oldest first', () => {
    const out = assessEngineHistory(history, NO_STATS, history)
    expect(out.map((a) => [a.values.sampleId, a.previousSampleId])).toEqual([['s1', null], ['s2', 's1'], ['s3', 's2']])
    // 20 -> 25 ppm over 10 h = 5 ppm per 10 h: below the caution rate.
    expect(out[1]!.assessment.status).toBe('normal')
    // 25 -> 60 ppm over 5 h = 70 ppm per 10 h: above the critical rate of 40.
    const jump = out[2]!.assessment
    expect(jump.status).toBe('critical')
    expect(jump.reasons).toHaveLength(1)
    expect(jump.reasons[0]).toMatchObject({ element: 'Fe', kind: 'rate', level: 'critical', limit: 40 })
    expect(jump.reasons[0]!.value).toBeCloseTo(70, 10)
  })

  it('gives no rate across an oil change', () => {
    const changed = history.map((s) => (s.sampleId === 's3' ? { ...s, oilHours: 5, oilChanged: true } : s))
    const out = assessEngineHistory(changed, NO_STATS, changed)
    expect(out[2]!.assessment.status).toBe('normal')
  })

  it('assessLatest reads the newest sample against the one before it: s3 after s2, 70 ppm per 10 h', () => {
    const latest = assessLatest(history, NO_STATS, history)!
    expect(latest.values.sampleId).toBe('s3')
    expect(latest.previousSampleId).toBe('s2')
    expect(latest.assessment.status).toBe('critical')
    expect(latest.assessment.reasons).toHaveLength(1)
    expect(latest.assessment.reasons[0]).toMatchObject({ element: 'Fe', kind: 'rate', level: 'critical', limit: 40 })
    expect(latest.assessment.reasons[0]!.value).toBeCloseTo(70, 10)
    expect(assessLatest([], NO_STATS, history)).toBeNull()
  })
})

describe('statistical limits leave the assessed sample out', () => {
  const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, statistical: { ...DEFAULT_OIL_LIMITS.statistical, minSamples: 5 } }
  const copper = [4, 5, 6, 5, 4, 6, 5, 5]
  const population = copper.map((cu, i) => sample(`p${i}`, { sampledAt: `2026-05-${String(i + 1).padStart(2, '0')}`, elements: { Cu: cu } }))
  const outlier = sample('x', { sampledAt: '2026-06-10', elements: { Cu: 12 } })
  const all = [...population, outlier]

  it('matches mean + 2 s / 3 s of the others, cross-checked with simple-statistics', () => {
    const cu = populationLimitsExcluding(all, 'x', limits).find((p) => p.element === 'Cu')!
    expect(cu.n).toBe(8)
    expect(cu.caution).toBeCloseTo(ss.mean(copper) + 2 * ss.sampleStandardDeviation(copper), 10)
    expect(cu.critical).toBeCloseTo(ss.mean(copper) + 3 * ss.sampleStandardDeviation(copper), 10)
    expect(cu.active).toBe(true)
  })

  it('flags the outlier against the population, naming the element, limit and n', () => {
    const result = assessLatest([outlier], limits, all)!
    // 12 ppm is below the absolute copper caution of 20 ppm: only the statistics catch it.
    expect(result.assessment.status).toBe('critical')
    const reason = result.assessment.reasons.find((r) => r.kind === 'statistical')!
    expect(reason).toMatchObject({ element: 'Cu', level: 'critical', value: 12 })
    expect(reason.limit).toBeCloseTo(ss.mean(copper) + 3 * ss.sampleStandardDeviation(copper), 10)
    expect(reason.message).toContain('of 8 samples')
  })

  it('stays quiet while the population is smaller than minSamples', () => {
    const few = [...population.slice(0, 3), outlier]
    expect(assessLatest([outlier], limits, few)!.assessment.status).toBe('normal')
  })
})

describe('leaveOneOutLimits', () => {
  // Random populations with a large mean beside a small spread (as calcium or zinc), and with gaps.
  let seed = 7
  const rand = () => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32)
  const population = Array.from({ length: 60 }, (_, i) => sample(`r${i}`, {
    elements: { Fe: 5 + rand() * 20, Ca: 2300 + rand() * 5, ...(i % 3 === 0 ? {} : { Cu: rand() * 8 }) },
  }))
  population.push(sample('only-one', { elements: { Ni: 2 } }))

  it.each(['sigma', 'percentile'] as const)('matches simple-statistics on the rest of the population for every element (%s)', (method) => {
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, statistical: { ...DEFAULT_OIL_LIMITS.statistical, method } }
    const fast = leaveOneOutLimits(population, limits)
    for (const id of ['r0', 'r1', 'r30', 'only-one', 'not-in-population']) {
      const rest = population.filter((s) => s.sampleId !== id)
      const got = fast(id)
      // Elements in the order of OIL_ELEMENTS that still have a reading once the sample is left out.
      const expectedElements = (['Fe', 'Cu', 'Ni', 'Ca'] as const).filter((e) => rest.some((s) => s.elements[e] !== undefined))
      expect(got.map((p) => p.element)).toEqual(expectedElements)
      for (const p of got) {
        const xs = rest.map((s) => s.elements[p.element]).filter((x): x is number => x !== undefined)
        const sd = xs.length >= 2 ? ss.sampleStandardDeviation(xs) : 0
        expect(p.n).toBe(xs.length)
        expect(p.active).toBe(xs.length >= limits.statistical.minSamples)
        expect(p.mean).toBeCloseTo(ss.mean(xs), 9)
        expect(p.sd).toBeCloseTo(sd, 9)
        const caution = method === 'sigma' ? ss.mean(xs) + 2 * sd : ss.quantile(xs, 0.95)
        const critical = method === 'sigma' ? ss.mean(xs) + 3 * sd : ss.quantile(xs, 0.98)
        expect(p.caution).toBeCloseTo(caution, 9)
        expect(p.critical).toBeCloseTo(critical, 9)
      }
    }
  })

  it('matches simple-statistics for one element left out', () => {
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, statistical: { ...DEFAULT_OIL_LIMITS.statistical, minSamples: 5 } }
    const rest = population.filter((s) => s.sampleId !== 'r5').map((s) => s.elements.Ca).filter((x): x is number => x !== undefined)
    const ca = leaveOneOutLimits(population, limits)('r5').find((p) => p.element === 'Ca')!
    expect(ca.n).toBe(59)
    expect(ca.mean).toBeCloseTo(ss.mean(rest), 9)
    expect(ca.sd).toBeCloseTo(ss.sampleStandardDeviation(rest), 9)
  })
})
