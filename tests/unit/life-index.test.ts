import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { accumulateUsage, type ComponentLimits, type SessionUsage } from '../../shared/domain/life'
import { createUsageIndex } from '../../shared/domain/life-index'
import { momentsOfSegments } from '../../shared/domain/rpm-moments'
import { makeLifeConfig, makeLimits as makeBaseLimits, makeOverRevBands } from '../../db/fixtures'

// The prefix-sum index is an optimisation: it must give accumulateUsage's answer for every window.
const cfg = makeLifeConfig({ referenceRpm: 8000, revLimitRpm: 8800, bandWidthRpm: 500, overRevBands: makeOverRevBands([['A', 8500, 0.1], ['B', 9000, 0]], { hysteresisRpm: 50 }) })
const makeLimits = (over: Partial<ComponentLimits> = {}): ComponentLimits =>
  makeBaseLimits({ hours: 50, km: 5000, eqHours: 40, overRevEvents: { A: 10, B: 1 }, immediateInspectionBand: 'B', damageExponent: 13, ...over })

const sessionArb = fc.record({
  runningSeconds: fc.integer({ min: 0, max: 20_000 }),
  distanceKm: fc.integer({ min: 0, max: 900 }),
  histogram: fc.array(fc.integer({ min: 0, max: 2000 }), { minLength: 1, maxLength: 20 }),
  peaks: fc.array(fc.integer({ min: 8400, max: 9600 }), { maxLength: 2 }),
  gapHours: fc.integer({ min: 1, max: 200 }),
  fromFile: fc.boolean(),
})

describe('usage index (case built with known answers: the reference accumulateUsage)', () => {
  it('equals accumulateUsage over any window, exponent and inspection clearance', () => {
    fc.assert(
      fc.property(fc.array(sessionArb, { minLength: 0, maxLength: 40 }), fc.nat(), fc.nat(), fc.constantFrom(0, 3, 7, 13), fc.boolean(), (raw, a, b, p, cleared) => {
        let t = Date.UTC(2026, 0, 1)
        const sessions: SessionUsage[] = raw.map((r, i) => {
          t += r.gapHours * 3600_000
          return { sessionId: i + 1, at: new Date(t).toISOString(), runningSeconds: r.runningSeconds, distanceKm: r.distanceKm, histogram: r.histogram,
            // a session read from a file carries rpm moments (here: each band's time at 30 % of its width)
            rpmMoments: r.fromFile ? momentsOfSegments(r.histogram.map((sec, k) => ({ rpm: (k + 0.3) * 500, seconds: sec }))) : null,
            overRevs: r.peaks.map((pk) => ({ bandId: pk >= 9000 ? 'B' : 'A', peakRpm: pk, durationS: 0.3, startS: 1 })) }
        })
        const index = createUsageIndex(sessions, cfg)
        const from = sessions.length ? a % (sessions.length + 1) : 0
        const to = from + (sessions.length ? b % (sessions.length - from + 1) : 0)
        const limits = makeLimits({ damageExponent: p })
        const opts = cleared && sessions.length ? { inspectionClearedAt: sessions[Math.floor(sessions.length / 2)]!.at } : {}
        const fast = index.usage(from, to, limits, opts)
        const ref = accumulateUsage(sessions.slice(from, to), cfg, limits, opts)
        expect(fast.hours).toBeCloseTo(ref.hours, 9)
        expect(fast.km).toBeCloseTo(ref.km, 9)
        expect(fast.eqHours).toBeCloseTo(ref.eqHours, 9)
        expect(fast.overRevCounts).toEqual(ref.overRevCounts)
        expect(fast.sessions).toBe(ref.sessions)
        expect(fast.immediateInspection).toBe(ref.immediateInspection)
      }),
      { numRuns: 300 },
    )
  })

  it('finds window bounds by time: a session exactly at the fitting moment belongs to the new installation', () => {
    const at = (h: number) => new Date(Date.UTC(2026, 5, 1, h)).toISOString()
    const s = (id: number, h: number): SessionUsage => ({ sessionId: id, at: at(h), runningSeconds: 3600, distanceKm: 100, histogram: [0, 3600], overRevs: [] })
    const index = createUsageIndex([s(1, 1), s(2, 2), s(3, 3)], cfg)
    expect(index.lowerBound(Date.parse(at(2)))).toBe(1)
    expect(index.lowerBound(Date.parse(at(0)))).toBe(0)
    expect(index.lowerBound(Date.parse(at(9)))).toBe(3)
    expect(index.usage(1, 3, makeLimits({ damageExponent: 0 })).hours).toBe(2)
  })
})
