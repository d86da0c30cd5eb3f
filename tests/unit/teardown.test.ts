import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics' // the ESM build has no default export
import {
  DISPOSITIONS,
  TEARDOWN_CONDITIONS,
  characteristicSchema,
  hoursToLimit,
  judge,
  plausibleRange,
  wearTrend,
  type Characteristic,
} from '../../shared/domain/teardown'

// Invented demo characteristics (a conrod big-end bearing clearance and a crankpin diameter).
const bigEndClearance: Characteristic = { key: 'big-end-clearance', label: 'Big-end bearing clearance', unit: 'mm', nominal: 0.035, min: 0.025, max: 0.06 }
const crankpinDiameter: Characteristic = { key: 'crankpin-diameter', label: 'Crankpin diameter', unit: 'mm', nominal: 47.995, min: 47.985, max: 48.0 }

describe('judge: tolerance with min and max included', () => {
  it('min and max are in tolerance; just outside is low or high', () => {
    expect(judge(0.025, bigEndClearance).verdict).toBe('in')
    expect(judge(0.06, bigEndClearance).verdict).toBe('in')
    expect(judge(0.0249, bigEndClearance).verdict).toBe('low')
    expect(judge(0.0601, bigEndClearance).verdict).toBe('high')
    expect(judge(47.985, crankpinDiameter).verdict).toBe('in')
    expect(judge(48.0, crankpinDiameter).verdict).toBe('in')
    expect(judge(47.984, crankpinDiameter).verdict).toBe('low')
    expect(judge(48.001, crankpinDiameter).verdict).toBe('high')
  })

  it('deviation is value - nominal; band position is 0 at min, 1 at max (hand-computed)', () => {
    expect(judge(0.025, bigEndClearance).bandPosition).toBe(0)
    expect(judge(0.06, bigEndClearance).bandPosition).toBe(1)
    const mid = judge(0.0425, bigEndClearance)
    expect(mid.bandPosition).toBeCloseTo(0.5, 12)
    expect(mid.deviation).toBeCloseTo(0.0075, 12)
    const low = judge(0.02, bigEndClearance)
    expect(low.bandPosition).toBeCloseTo(-5 / 35, 12)
    expect(low.deviation).toBeCloseTo(-0.015, 12)
  })

  it('implausible outside nominal +- 10 band widths by default, never below zero for a length', () => {
    // band width 0.035 mm: plausible 0 (clamped from -0.315) to 0.385 mm
    const r = plausibleRange(bigEndClearance)
    expect(r.min).toBe(0)
    expect(r.max).toBeCloseTo(0.385, 12)
    expect(judge(-0.001, bigEndClearance).verdict).toBe('implausible')
    expect(judge(0, bigEndClearance).verdict).toBe('low')
    expect(judge(0.385, bigEndClearance).verdict).toBe('high')
    expect(judge(0.386, bigEndClearance).verdict).toBe('implausible')
    // a typing slip of a decimal point on a diameter
    expect(judge(479.95, crankpinDiameter).verdict).toBe('implausible')
    expect(judge(Number.NaN, crankpinDiameter).verdict).toBe('implausible')
  })

  it('an angle may be negative within the default plausible range', () => {
    const cam: Characteristic = { key: 'cam-timing', label: 'Inlet cam timing', unit: 'deg', nominal: 0, min: -1, max: 1 }
    expect(plausibleRange(cam)).toEqual({ min: -20, max: 20 })
    expect(judge(-5, cam).verdict).toBe('low')
    expect(judge(-21, cam).verdict).toBe('implausible')
  })

  it('uses an explicit plausible range when given', () => {
    const c: Characteristic = { ...bigEndClearance, plausibleMin: 0.01, plausibleMax: 0.1 }
    expect(judge(0.009, c).verdict).toBe('implausible')
    expect(judge(0.011, c).verdict).toBe('low')
    expect(judge(0.1, c).verdict).toBe('high')
    expect(judge(0.11, c).verdict).toBe('implausible')
  })

  it('refuses a characteristic whose max is not above its min', () => {
    expect(() => judge(1, { ...bigEndClearance, min: 0.06, max: 0.06 })).toThrow(RangeError)
  })
})

describe('wearTrend and hoursToLimit', () => {
  // hand-computed: clearance opens 0.004 mm per 10 h from 0.030 mm
  const rising = [
    { hours: 0, value: 0.03 },
    { hours: 10, value: 0.034 },
    { hours: 20, value: 0.038 },
    { hours: 30, value: 0.042 },
  ]

  it('fits the hand-computed line: slope 0.0004 mm/h, intercept 0.030 mm', () => {
    const t = wearTrend(rising)!
    expect(t.n).toBe(4)
    expect(t.slopePerHour).toBeCloseTo(0.0004, 12)
    expect(t.intercept).toBeCloseTo(0.03, 12)
  })

  it('hours left: the line reaches max 0.060 mm at 75 h, so 45 h from 30 h (hand-computed)', () => {
    const t = wearTrend(rising)!
    expect(hoursToLimit(t, 30, bigEndClearance)).toBeCloseTo(45, 9)
    expect(hoursToLimit(t, 75, bigEndClearance)).toBeCloseTo(0, 9)
    expect(hoursToLimit(t, 100, bigEndClearance)).toBe(0) // already past
  })

  it('a falling diameter runs to min: 47.998 mm - 0.0001 mm/h reaches 47.985 at 130 h, 110 h from 20 h (hand-computed)', () => {
    const t = wearTrend([
      { hours: 0, value: 47.998 },
      { hours: 20, value: 47.996 },
    ])!
    expect(t.slopePerHour).toBeCloseTo(-0.0001, 12)
    expect(hoursToLimit(t, 20, crankpinDiameter)).toBeCloseTo(110, 6)
  })

  it('slope and intercept agree with simple-statistics linearRegression on scattered readings', () => {
    const pts = [
      { hours: 12, value: 0.031 },
      { hours: 25, value: 0.0335 },
      { hours: 31, value: 0.0332 },
      { hours: 47, value: 0.0371 },
      { hours: 60, value: 0.0389 },
      { hours: 1012, value: 0.2 },
    ]
    const t = wearTrend(pts)!
    const ref = ss.linearRegression(pts.map((p) => [p.hours, p.value]))
    expect(t.slopePerHour).toBeCloseTo(ref.m, 12)
    expect(t.intercept).toBeCloseTo(ref.b, 12)
  })

  it('null with fewer than 2 points or all at the same hours', () => {
    expect(wearTrend([])).toBeNull()
    expect(wearTrend([{ hours: 10, value: 0.03 }])).toBeNull()
    expect(wearTrend([{ hours: 10, value: 0.03 }, { hours: 10, value: 0.04 }])).toBeNull()
  })

  it('hoursToLimit is null for a flat line', () => {
    expect(hoursToLimit({ slopePerHour: 0, intercept: 0.03 }, 10, bigEndClearance)).toBeNull()
  })
})

describe('characteristicSchema', () => {
  it('accepts a consistent characteristic', () => {
    expect(characteristicSchema.safeParse(bigEndClearance).success).toBe(true)
  })

  it('names the field in each rejection', () => {
    const r = characteristicSchema.safeParse({ ...bigEndClearance, min: 0.07 })
    expect(r.success).toBe(false)
    const paths = r.error!.issues.map((i) => i.path.join('.'))
    expect(paths).toContain('max')
    expect(paths).toContain('nominal')
    const u = characteristicSchema.safeParse({ ...bigEndClearance, unit: 'inch' })
    expect(u.error!.issues[0]!.path).toEqual(['unit'])
    expect(u.error!.issues[0]!.message).toMatch(/unit/)
  })
})

describe('vocabularies', () => {
  it('teardown conditions and dispositions', () => {
    expect(TEARDOWN_CONDITIONS).toEqual(['as new', 'normal wear', 'worn to limit', 'scored', 'pitted', 'cracked', 'seized', 'fretted', 'discoloured (heat)', 'bent'])
    expect(DISPOSITIONS).toEqual(['refit', 'replace', 'scrap', 'quarantine', 'send-to-lab'])
    expect(Object.isFrozen(TEARDOWN_CONDITIONS)).toBe(true)
  })
})
