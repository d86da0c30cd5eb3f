import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { sum } from 'simple-statistics'
import {
  accumulateUsage,
  addSession,
  bandIndexForRpm,
  bandMidRpm,
  buildAt,
  emptyUsage,
  equivalentHoursAtBandMidpoints,
  equivalentHoursFromBands,
  evaluatePartLife,
  hoursSinceRebuild,
  lifeTimeline,
  minerSum,
  sessionsForComponent,
  statusFor,
  worstStatus,
  type EngineSession,
  type EngineTypeLifeConfig,
  type Installation,
  type OverRevEvent,
  type SessionUsage,
} from '../../shared/domain/life'
import { makeLifeConfig, makeLimits, makeOverRevBands, makeSession } from '../../db/fixtures'

// Invented engine type: 1,000 rpm bands, reference 8,000 rpm, three over-rev bands.
function makeCfg(overrides: Partial<EngineTypeLifeConfig> = {}): EngineTypeLifeConfig {
  const overRevBands = makeOverRevBands([['log', 8600, 0.2, 'logged'], ['valve', 8900, 0.1, 'valve train check'], ['strip', 9300, 0.05, 'teardown']])
  return makeLifeConfig({ referenceRpm: 8000, revLimitRpm: 8500, bandWidthRpm: 1000, overRevBands, ...overrides })
}

function makeEngineSession(engineId: number, overrides: Partial<SessionUsage> = {}): EngineSession {
  return { ...makeSession(overrides), engineId }
}

function makeOverRev(bandId: string, peakRpm: number, overrides: Partial<OverRevEvent> = {}): OverRevEvent {
  return { bandId, peakRpm, durationS: 0.4, startS: 100, ...overrides }
}

/** seconds in band index -> histogram array */
function histogramOf(entries: Record<number, number>): number[] {
  const max = Math.max(...Object.keys(entries).map(Number))
  return Array.from({ length: max + 1 }, (_, i) => entries[i] ?? 0)
}

describe('rpm bands', () => {
  it('band i covers [i w, (i+1) w) and is evaluated at its midpoint', () => {
    expect(bandMidRpm(0, 250)).toBe(125)
    expect(bandMidRpm(7, 1000)).toBe(7500)
    expect(bandIndexForRpm(7499.9, 1000)).toBe(7)
    expect(bandIndexForRpm(8000, 1000)).toBe(8)
    expect(bandIndexForRpm(7999.999, 1000)).toBe(7)
    expect(bandIndexForRpm(0, 1000)).toBe(0)
    expect(bandIndexForRpm(-5, 1000)).toBe(0)
  })

  it('rejects a band width that is not positive', () => {
    expect(() => bandIndexForRpm(5000, 0)).toThrow(RangeError)
  })
})

describe('equivalent hours, worked histogram (check values section 3 [derived]; Palmgren-Miner with Basquin, Shigley ch. 6)', () => {
  // 1 h at 6,000, 2 h at 7,000, 0.5 h at 8,000 rpm; reference 8,000 rpm.
  const bands = [
    { rpm: 6000, hours: 1 },
    { rpm: 7000, hours: 2 },
    { rpm: 8000, hours: 0.5 },
  ]
  const table: [m: number, p: number, eq: number][] = [
    [3, 7, 1.4189],
    [6, 13, 0.8762],
    [9, 19, 0.6624],
  ]
  for (const [m, p, eq] of table) {
    it(`S-N slope m = ${m}, p = 2m + 1 = ${p}: ${eq} equivalent hours (1e-4)`, () => {
      expect(p).toBe(2 * m + 1)
      expect(Math.abs(equivalentHoursFromBands(bands, 8000, p) - eq)).toBeLessThanOrEqual(1e-4)
    })
  }

  it('p = 0 gives plain hours (3.5 h)', () => {
    expect(equivalentHoursFromBands(bands, 8000, 0)).toBe(3.5)
  })
})

// Only sessions without rpm moments (entered by hand) are evaluated this way; the session page marks
// them approximate. Exact evaluation is tested in rpm-moments.test.ts.
describe('equivalent hours at band midpoints, the approximation for hand-entered histograms (hand-computed known answers)', () => {
  const cfg = makeCfg()
  const equivalentHours = (h: number[], c: EngineTypeLifeConfig, p: number) => equivalentHoursAtBandMidpoints(h, c.bandWidthRpm, c.referenceRpm, p)
  // 3,600 s in band 5 (mid 5,500 rpm), 1,800 s in band 7 (mid 7,500 rpm), 900 s idle in band 0.
  const hist = histogramOf({ 0: 900, 5: 3600, 7: 1800 })

  it('exponent 0 is plain running hours, including idle bands: 6,300 s = 1.75 h', () => {
    expect(equivalentHours(hist, cfg, 0)).toBe(1.75)
  })

  it('exponent 1: 1 x 11/16 + 0.5 x 15/16 + 0.25 x 1/16 = 1.171875', () => {
    expect(equivalentHours(hist, cfg, 1)).toBeCloseTo(1.171875, 14)
  })

  it('exponent 2: 1 x (11/16)^2 + 0.5 x (15/16)^2 + 0.25 x (1/16)^2 = 0.9130859375', () => {
    expect(equivalentHours(hist, cfg, 2)).toBeCloseTo(121 / 256 + 225 / 512 + 1 / 1024, 14)
    expect(equivalentHours(hist, cfg, 2)).toBeCloseTo(0.9130859375, 14)
  })

  it('is not the definition: one steady hour at 8,499 rpm, reference 8,500, p = 13 is 0.9985 eq h exactly; the band [8,000, 8,500) at its midpoint gives 0.678 (check values section 3 [derived])', () => {
    const c = makeCfg({ bandWidthRpm: 500, referenceRpm: 8500 })
    expect(equivalentHours(histogramOf({ 16: 3600 }), c, 13)).toBeCloseTo(0.678, 3)
    // the steady-segment definition, by hand: (8499 / 8500)^13
    expect(Math.abs(Math.pow(8499 / 8500, 13) - 0.9985)).toBeLessThan(5e-5)
  })

  it('exponent 0 equals the histogram total / 3600 for any histogram (property; sum by simple-statistics)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 7200, noNaN: true }), { maxLength: 20 }), (h) => {
        const expected = h.length === 0 ? 0 : sum(h) / 3600
        expect(equivalentHours(h, cfg, 0)).toBeCloseTo(expected, 9)
      }),
    )
  })

  it('a higher exponent never adds equivalent hours when all running is below the reference rpm (property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 7200, noNaN: true }), { maxLength: 8 }), (h) => {
        // bands 0..7 all have midpoints below 8,000 rpm
        expect(equivalentHours(h, cfg, 13)).toBeLessThanOrEqual(equivalentHours(h, cfg, 7) + 1e-12)
      }),
    )
  })
})

describe('Miner sum (check values section 3 [derived])', () => {
  it('1e7 cycles to failure at 8,000 rpm, m = 6, one cycle per revolution: D = 0.0420594', () => {
    const m = 6
    const blocks = [
      { rpm: 6000, hours: 1 },
      { rpm: 7000, hours: 2 },
      { rpm: 8000, hours: 0.5 },
    ].map(({ rpm, hours }) => ({
      cycles: rpm * 60 * hours,
      // stress grows with rpm^2, N grows with S^-m
      cyclesToFailure: 1e7 * (8000 / rpm) ** (2 * m),
    }))
    expect(blocks.map((b) => b.cycles / b.cyclesToFailure).map((d) => Number(d.toFixed(7)))).toEqual([
      0.0011403, 0.016919, 0.024,
    ])
    expect(Math.abs(minerSum(blocks) - 0.0420594)).toBeLessThanOrEqual(5e-8)
  })

  it('agrees with equivalent hours at p = 2m + 1 times cycles per reference hour over cycles to failure', () => {
    const eq = equivalentHoursFromBands(
      [
        { rpm: 6000, hours: 1 },
        { rpm: 7000, hours: 2 },
        { rpm: 8000, hours: 0.5 },
      ],
      8000,
      13,
    )
    expect((eq * 8000 * 60) / 1e7).toBeCloseTo(0.0420594, 7)
  })

  it('a 10 % over-rev multiplies damage per cycle by 1.1^(2m) = 3.138 for m = 6', () => {
    expect(1.1 ** 12).toBeCloseTo(3.138, 3)
    const atRef = minerSum([{ cycles: 1, cyclesToFailure: 1e7 }])
    const over = minerSum([{ cycles: 1, cyclesToFailure: 1e7 / 1.1 ** 12 }])
    expect(over / atRef).toBeCloseTo(3.138, 3)
  })

  it('infinite life and zero cycles add nothing', () => {
    expect(minerSum([])).toBe(0)
    expect(minerSum([{ cycles: 1e9, cyclesToFailure: Infinity }, { cycles: 0, cyclesToFailure: 0 }])).toBe(0)
  })
})

describe('accumulating usage', () => {
  const cfg = makeCfg()

  it('sums hours, km, equivalent hours and sessions', () => {
    const limits = makeLimits({ damageExponent: 1 })
    const s1 = makeSession({ runningSeconds: 5400, distanceKm: 200, histogram: histogramOf({ 5: 3600, 7: 1800 }) })
    const s2 = makeSession({ runningSeconds: 1800, distanceKm: 75.5, histogram: histogramOf({ 7: 1800 }) })
    const u = accumulateUsage([s1, s2], cfg, limits)
    expect(u.hours).toBe(2)
    expect(u.km).toBe(275.5)
    // 1 x 11/16 + 0.5 x 15/16 + 0.5 x 15/16
    expect(u.eqHours).toBeCloseTo(0.6875 + 0.9375, 14)
    expect(u.sessions).toBe(2)
    expect(u.immediateInspection).toBe(false)
  })

  it('addSession returns a new object and leaves its inputs alone', () => {
    const before = emptyUsage()
    before.overRevCounts.log = 1
    const frozen = structuredClone(before)
    const s = makeSession({ overRevs: [makeOverRev('log', 8700)] })
    const sFrozen = structuredClone(s)
    const after = addSession(before, s, cfg, makeLimits())
    expect(after).not.toBe(before)
    expect(after.overRevCounts).not.toBe(before.overRevCounts)
    expect(before).toEqual(frozen)
    expect(s).toEqual(sFrozen)
    expect(after.overRevCounts.log).toBe(2)
  })

  it('an empty history is empty usage', () => {
    expect(accumulateUsage([], cfg, makeLimits())).toEqual(emptyUsage())
  })
})

describe('over-rev events', () => {
  const cfg = makeCfg()

  it('life counts the verdict stored with the event, not its peak: a short spike to 9,800 rpm judged "log" counts as log', () => {
    const limits = makeLimits({ hours: null, overRevEvents: { log: 10, strip: 1 } })
    const u = accumulateUsage([makeSession({ overRevs: [makeOverRev('log', 9800)] })], cfg, limits)
    expect(u.overRevCounts).toEqual({ log: 1 })
  })

  it('counts each event once, against its own band only, and fraction = count / allowed', () => {
    const limits = makeLimits({ hours: null, overRevEvents: { log: 10, valve: 4, strip: 1 } })
    const s = makeSession({
      overRevs: [makeOverRev('log', 8650), makeOverRev('log', 8700), makeOverRev('valve', 8950), makeOverRev('valve', 9000), makeOverRev('valve', 9100)],
    })
    const life = evaluatePartLife(accumulateUsage([s], cfg, limits), limits, cfg)
    expect(life.usage.overRevCounts).toEqual({ log: 2, valve: 3 })
    const byBand = Object.fromEntries(life.measures.map((m) => [m.bandId, m]))
    expect(byBand.log).toMatchObject({ kind: 'overRev', unit: 'events', used: 2, limit: 10, fraction: 0.2, left: 8 })
    expect(byBand.valve).toMatchObject({ used: 3, limit: 4, fraction: 0.75, left: 1 })
    expect(byBand.strip).toMatchObject({ used: 0, limit: 1, fraction: 0, left: 1 })
    expect(life.governing?.bandId).toBe('valve')
    expect(life.status).toBe('ok')
  })

  it('a band with no limit is counted but not measured', () => {
    const limits = makeLimits({ overRevEvents: { strip: 2 } })
    const life = evaluatePartLife(accumulateUsage([makeSession({ overRevs: [makeOverRev('log', 8700)] })], cfg, limits), limits, cfg)
    expect(life.usage.overRevCounts.log).toBe(1)
    expect(life.measures.filter((m) => m.kind === 'overRev').map((m) => m.bandId)).toEqual(['strip'])
  })

  it('a zero allowance is reached by the first event', () => {
    const limits = makeLimits({ hours: null, overRevEvents: { strip: 0 } })
    const none = evaluatePartLife(emptyUsage(), limits, cfg)
    expect(none.fraction).toBe(0)
    expect(none.status).toBe('ok')
    const one = evaluatePartLife(accumulateUsage([makeSession({ overRevs: [makeOverRev('strip', 9400)] })], cfg, limits), limits, cfg)
    expect(one.fraction).toBe(1)
    expect(one.status).toBe('over')
    expect(one.governing?.left).toBe(0)
  })
})

describe('immediate-inspection flag', () => {
  const cfg = makeCfg()
  const limits = makeLimits({ immediateInspectionBand: 'valve' })

  it('an event below the inspection band does not raise it', () => {
    expect(accumulateUsage([makeSession({ overRevs: [makeOverRev('log', 8800)] })], cfg, limits).immediateInspection).toBe(false)
  })

  it('an event in the inspection band raises it', () => {
    const u = accumulateUsage([makeSession({ overRevs: [makeOverRev('valve', 8950)] })], cfg, limits)
    expect(u.immediateInspection).toBe(true)
    expect(evaluatePartLife(u, limits, cfg).immediateInspection).toBe(true)
  })

  it('an event in a higher band raises it', () => {
    expect(accumulateUsage([makeSession({ overRevs: [makeOverRev('strip', 9500)] })], cfg, limits).immediateInspection).toBe(true)
  })

  it('a spike above the inspection band that did not last its minimum duration (verdict "log") does not raise it', () => {
    expect(accumulateUsage([makeSession({ overRevs: [makeOverRev('log', 9500)] })], cfg, limits).immediateInspection).toBe(false)
  })

  it('stays raised over later clean sessions', () => {
    const sessions = [
      makeSession({ at: '2031-05-10T10:00:00Z', overRevs: [makeOverRev('valve', 9000)] }),
      makeSession({ at: '2031-05-11T10:00:00Z' }),
    ]
    expect(accumulateUsage(sessions, cfg, limits).immediateInspection).toBe(true)
  })

  it('no inspection band, no flag', () => {
    const u = accumulateUsage([makeSession({ overRevs: [makeOverRev('strip', 9900)] })], cfg, makeLimits())
    expect(u.immediateInspection).toBe(false)
  })

  it('over-revs before a signed-off inspection no longer raise it, but still count', () => {
    const sessions = [
      makeSession({ at: '2031-05-10T10:00:00Z', overRevs: [makeOverRev('valve', 9000)] }),
      makeSession({ at: '2031-05-12T10:00:00Z', overRevs: [makeOverRev('log', 8700)] }),
    ]
    const u = accumulateUsage(sessions, cfg, limits, { inspectionClearedAt: '2031-05-11T08:00:00Z' })
    expect(u.immediateInspection).toBe(false)
    expect(u.overRevCounts).toEqual({ valve: 1, log: 1 })
    const later = accumulateUsage(
      [...sessions, makeSession({ at: '2031-05-13T10:00:00Z', overRevs: [makeOverRev('valve', 8990)] })],
      cfg,
      limits,
      { inspectionClearedAt: '2031-05-11T08:00:00Z' },
    )
    expect(later.immediateInspection).toBe(true)
  })
})

describe('status boundaries (levels from the component type)', () => {
  const levels = { warningLevel: 0.8, dueLevel: 0.9 }
  const cases: [number, string][] = [
    [0, 'ok'],
    [0.79, 'ok'],
    [0.7999, 'ok'],
    [0.8, 'warning'],
    [0.85, 'warning'],
    [0.9, 'due'],
    [0.99, 'due'],
    [1.0, 'over'],
    [1.5, 'over'],
  ]
  for (const [fraction, status] of cases) {
    it(`${fraction} is ${status}`, () => {
      expect(statusFor(fraction, levels)).toBe(status)
    })
  }

  it('float noise just under a boundary does not hide it (0.1 + 0.7 is warning at 0.8)', () => {
    expect(0.1 + 0.7).toBeLessThan(0.8)
    expect(statusFor(0.1 + 0.7, levels)).toBe('warning')
  })

  it('an unreadable fraction never reads as ok', () => {
    expect(statusFor(Number.NaN, levels)).toBe('over')
  })

  it('exactly 0.8 and exactly 1.0 through evaluatePartLife', () => {
    const cfg = makeCfg()
    const limits = makeLimits({ hours: 10 })
    const at = (seconds: number) => evaluatePartLife(accumulateUsage([makeSession({ runningSeconds: seconds })], cfg, limits), limits, cfg)
    expect(at(8 * 3600).fraction).toBe(0.8)
    expect(at(8 * 3600).status).toBe('warning')
    expect(at(8 * 3600 - 36).status).toBe('ok') // 0.799
    expect(at(9 * 3600).status).toBe('due')
    expect(at(10 * 3600).fraction).toBe(1)
    expect(at(10 * 3600).status).toBe('over')
  })

  it('worstStatus orders ok < warning < due < over', () => {
    expect(worstStatus([])).toBe('ok')
    expect(worstStatus(['ok', 'ok'])).toBe('ok')
    expect(worstStatus(['ok', 'warning', 'ok'])).toBe('warning')
    expect(worstStatus(['due', 'warning'])).toBe('due')
    expect(worstStatus(['warning', 'over', 'due'])).toBe('over')
  })
})

describe('part life evaluation', () => {
  const cfg = makeCfg()

  it('the governing limit is the one with the largest fraction', () => {
    const limits = makeLimits({ hours: 20, km: 3000, eqHours: 10, damageExponent: 0, overRevEvents: { log: 20 } })
    // 10 h of 20 (0.5), 2,400 km of 3,000 (0.8), 6 eq h of 10 (0.6), 5 of 20 events (0.25)
    const usage = { ...emptyUsage(), hours: 10, km: 2400, eqHours: 6, overRevCounts: { log: 5 }, sessions: 4 }
    const life = evaluatePartLife(usage, limits, cfg)
    expect(life.measures.map((m) => [m.kind, m.fraction])).toEqual([
      ['hours', 0.5],
      ['km', 0.8],
      ['eqHours', 0.6],
      ['overRev', 0.25],
    ])
    expect(life.governing).toMatchObject({ kind: 'km', label: 'Distance', unit: 'km', used: 2400, limit: 3000, left: 600 })
    expect(life.fraction).toBe(0.8)
    expect(life.status).toBe('warning')
  })

  it('units and labels of each measure', () => {
    const limits = makeLimits({ hours: 1, km: 1, eqHours: 1, overRevEvents: { valve: 1 } })
    const life = evaluatePartLife(emptyUsage(), limits, cfg)
    expect(life.measures.map((m) => m.unit)).toEqual(['h', 'km', 'eq. h', 'events'])
    expect(life.measures[3]?.label).toContain('valve train check')
  })

  it('no limits: fraction 0, no governing measure, ok', () => {
    const life = evaluatePartLife({ ...emptyUsage(), hours: 500 }, makeLimits({ hours: null }), cfg)
    expect(life.measures).toEqual([])
    expect(life.governing).toBeNull()
    expect(life.fraction).toBe(0)
    expect(life.status).toBe('ok')
  })

  it('left is never negative', () => {
    const life = evaluatePartLife({ ...emptyUsage(), hours: 25, km: 5000 }, makeLimits({ hours: 20, km: 4000 }), cfg)
    expect(life.measures.map((m) => m.left)).toEqual([0, 0])
    expect(life.fraction).toBe(1.25)
    expect(life.status).toBe('over')
  })

  it('left is never negative and fraction = used / limit (property)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0, max: 1e5, noNaN: true }),
        fc.double({ min: 1e-3, max: 1e5, noNaN: true }),
        (used, limit) => {
          const life = evaluatePartLife({ ...emptyUsage(), hours: used }, makeLimits({ hours: limit }), cfg)
          expect(life.governing?.left).toBeGreaterThanOrEqual(0)
          expect(life.fraction).toBeCloseTo(used / limit, 9)
        },
      ),
    )
  })

  it('a limit change moves the fractions (and can move the governing limit)', () => {
    const usage = { ...emptyUsage(), hours: 12, km: 1500 }
    const before = evaluatePartLife(usage, makeLimits({ hours: 20, km: 3000 }), cfg)
    expect(before.fraction).toBe(0.6)
    expect(before.governing?.kind).toBe('hours')
    expect(before.status).toBe('ok')
    const tightened = evaluatePartLife(usage, makeLimits({ hours: 15, km: 3000 }), cfg)
    expect(tightened.fraction).toBe(0.8)
    expect(tightened.status).toBe('warning')
    const relaxed = evaluatePartLife(usage, makeLimits({ hours: 40, km: 3000 }), cfg)
    expect(relaxed.fraction).toBe(0.5)
    expect(relaxed.governing?.kind).toBe('km')
  })

  it('a change of damage exponent moves equivalent hours of the same history', () => {
    const sessions = [makeSession({ histogram: histogramOf({ 5: 3600, 7: 1800 }) })]
    const p1 = accumulateUsage(sessions, cfg, makeLimits({ damageExponent: 1 }))
    const p2 = accumulateUsage(sessions, cfg, makeLimits({ damageExponent: 2 }))
    expect(p1.eqHours).toBeCloseTo(1.15625, 14)
    expect(p2.eqHours).toBeCloseTo(0.912109375, 14)
  })
})

describe('life follows the part across engines', () => {
  const A = 1
  const B = 2
  const ROD = 77
  const installations: Installation[] = [
    { componentId: ROD, engineId: A, position: 'conrod 3', from: '2031-03-01T00:00:00Z', to: '2031-04-01T00:00:00Z' },
    { componentId: ROD, engineId: B, position: 'conrod 5', from: '2031-04-10T00:00:00Z', to: null },
    { componentId: 78, engineId: A, position: 'conrod 3', from: '2031-04-01T00:00:00Z', to: null },
    { componentId: 90, engineId: B, position: 'conrod 10', from: '2031-01-01T00:00:00Z', to: null },
    { componentId: 91, engineId: B, position: 'conrod 2', from: '2031-01-01T00:00:00Z', to: null },
  ]
  const sessions: EngineSession[] = [
    makeEngineSession(A, { sessionId: 101, at: '2031-02-20T10:00:00Z', runningSeconds: 1000 }), // before fitting
    makeEngineSession(A, { sessionId: 102, at: '2031-03-05T10:00:00Z', runningSeconds: 3600 }), // in A
    makeEngineSession(A, { sessionId: 103, at: '2031-04-01T00:00:00Z', runningSeconds: 500 }), // the removal moment: not in
    makeEngineSession(B, { sessionId: 104, at: '2031-04-05T10:00:00Z', runningSeconds: 700 }), // B before fitting
    makeEngineSession(B, { sessionId: 106, at: '2031-04-20T10:00:00Z', runningSeconds: 5400 }), // in B
    makeEngineSession(B, { sessionId: 105, at: '2031-04-10T00:00:00Z', runningSeconds: 1800 }), // the fitting moment: in
    makeEngineSession(A, { sessionId: 107, at: '2031-04-20T10:00:00Z', runningSeconds: 900 }), // A after removal
  ]

  it('collects the sessions from both engines, in time order, with from <= t < to', () => {
    expect(sessionsForComponent(ROD, installations, sessions).map((s) => s.sessionId)).toEqual([102, 105, 106])
  })

  it('accumulates life from both engines: 1 + 0.5 + 1.5 = 3 h', () => {
    const cfg = makeCfg()
    const limits = makeLimits({ hours: 4 })
    const life = evaluatePartLife(accumulateUsage(sessionsForComponent(ROD, installations, sessions), cfg, limits), limits, cfg)
    expect(life.usage.hours).toBe(3)
    expect(life.fraction).toBe(0.75)
  })

  it('the replacement part in A only sees A after its fitting', () => {
    expect(sessionsForComponent(78, installations, sessions).map((s) => s.sessionId)).toEqual([103, 107])
  })

  it('a part never installed has no sessions', () => {
    expect(sessionsForComponent(999, installations, sessions)).toEqual([])
  })

  it('compares instants, not strings, when offsets differ', () => {
    const inst: Installation[] = [{ componentId: 5, engineId: A, position: 'crank', from: '2031-03-01T12:00:00+02:00', to: null }]
    const s = [
      makeEngineSession(A, { sessionId: 1, at: '2031-03-01T10:30:00Z' }), // 12:30 local: in
      makeEngineSession(A, { sessionId: 2, at: '2031-03-01T09:30:00Z' }), // 11:30 local: out
    ]
    expect(sessionsForComponent(5, inst, s).map((x) => x.sessionId)).toEqual([1])
  })

  it('buildAt gives the open installations of an engine at a moment, by position', () => {
    expect(buildAt(A, '2031-03-15T00:00:00Z', installations).map((i) => i.componentId)).toEqual([ROD])
    expect(buildAt(A, '2031-04-01T00:00:00Z', installations).map((i) => i.componentId)).toEqual([78])
    expect(buildAt(B, '2031-04-05T00:00:00Z', installations).map((i) => i.position)).toEqual(['conrod 2', 'conrod 10'])
    expect(buildAt(B, '2031-04-15T00:00:00Z', installations).map((i) => i.position)).toEqual([
      'conrod 2',
      'conrod 5',
      'conrod 10',
    ])
  })

  it('hoursSinceRebuild counts that engine only, from the rebuild moment on', () => {
    expect(hoursSinceRebuild(A, '2031-04-01T00:00:00Z', sessions)).toBeCloseTo((500 + 900) / 3600, 12)
    expect(hoursSinceRebuild(A, null, sessions)).toBeCloseTo((1000 + 3600 + 500 + 900) / 3600, 12)
    expect(hoursSinceRebuild(B, '2031-04-10T00:00:00Z', sessions)).toBe(2)
    expect(hoursSinceRebuild(B, '2032-01-01T00:00:00Z', sessions)).toBe(0)
  })
})

describe('life timeline', () => {
  const cfg = makeCfg()

  it('cumulative fraction and status after each session, in time order', () => {
    const limits = makeLimits({ hours: 10, overRevEvents: { strip: 1 } })
    const tl = lifeTimeline(
      [
        makeSession({ sessionId: 3, at: '2031-06-03T10:00:00Z', runningSeconds: 3 * 3600 }),
        makeSession({ sessionId: 1, at: '2031-06-01T10:00:00Z', runningSeconds: 4 * 3600 }),
        makeSession({ sessionId: 2, at: '2031-06-02T10:00:00Z', runningSeconds: 1.5 * 3600 }),
        makeSession({ sessionId: 4, at: '2031-06-04T10:00:00Z', runningSeconds: 600, overRevs: [makeOverRev('strip', 9400)] }),
      ],
      cfg,
      limits,
    )
    expect(tl.map((p) => p.sessionId)).toEqual([1, 2, 3, 4])
    expect(tl.map((p) => p.fraction)).toEqual([0.4, 0.55, 0.85, 1])
    expect(tl.map((p) => p.status)).toEqual(['ok', 'ok', 'warning', 'over'])
    expect(tl[0]?.at).toBe('2031-06-01T10:00:00Z')
  })

  it('never decreases (property)', () => {
    const limits = makeLimits({ hours: 50, km: 5000, eqHours: 30, damageExponent: 7, overRevEvents: { log: 30, valve: 5 } })
    fc.assert(
      fc.property(
        fc.array(
          fc.record({
            runningSeconds: fc.integer({ min: 0, max: 7200 }),
            distanceKm: fc.double({ min: 0, max: 400, noNaN: true }),
            histogram: fc.array(fc.integer({ min: 0, max: 3600 }), { maxLength: 10 }),
            peaks: fc.array(fc.integer({ min: 8600, max: 9800 }), { maxLength: 3 }),
            day: fc.integer({ min: 1, max: 28 }),
          }),
          { maxLength: 12 },
        ),
        (rows) => {
          const sessions = rows.map((r, i) =>
            makeSession({
              sessionId: i + 1,
              at: `2031-07-${String(r.day).padStart(2, '0')}T10:00:00Z`,
              runningSeconds: r.runningSeconds,
              distanceKm: r.distanceKm,
              histogram: r.histogram,
              overRevs: r.peaks.map((p) => makeOverRev('log', p)),
            }),
          )
          const tl = lifeTimeline(sessions, cfg, limits)
          for (let i = 1; i < tl.length; i++) expect(tl[i]!.fraction).toBeGreaterThanOrEqual(tl[i - 1]!.fraction)
          const last = tl.at(-1)
          if (last) expect(last.fraction).toBeCloseTo(evaluatePartLife(accumulateUsage(sessions, cfg, limits), limits, cfg).fraction, 9)
        },
      ),
    )
  })
})
