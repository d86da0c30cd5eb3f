// One verdict per over-rev event, decided from the time at or above each band's threshold, and decided
// again from the stored profile when the bands are edited. Cases built by hand with known answers;
// band levels are invented demo values (log / inspect / teardown steps are common practice).
import { describe, expect, it } from 'vitest'
import { classifyExcursion, excursionDamage, reclassifyEvents, secondsAtOrAbove, type OverRevEvent } from '../../shared/domain/over-rev'

const BANDS = [
  { id: 'log', label: 'Logged', minRpm: 9000, minDurationS: 0.2, hysteresisRpm: 100 },
  { id: 'inspect', label: 'Inspect', minRpm: 9300, minDurationS: 0.1, hysteresisRpm: 100 },
  { id: 'teardown', label: 'Teardown', minRpm: 9800, minDurationS: 0, hysteresisRpm: 100 },
]

// 0.6 s at 9,100.0 rpm, 0.05 s at 9,400.0 rpm, 0.05 s at 8,950.5 rpm (inside the hysteresis)
const PROFILE: [number, number][] = [
  [94000, 0.05],
  [91000, 0.6],
  [89505, 0.05],
]

describe('time at or above a threshold', () => {
  it('sums the profile levels at or above the threshold (tenths of rpm)', () => {
    expect(secondsAtOrAbove(PROFILE, 9000)).toBeCloseTo(0.65, 12)
    expect(secondsAtOrAbove(PROFILE, 9400)).toBeCloseTo(0.05, 12)
    expect(secondsAtOrAbove(PROFILE, 9400.1)).toBe(0)
    expect(secondsAtOrAbove(PROFILE, 8950)).toBeCloseTo(0.7, 12)
  })
})

describe('classifyExcursion', () => {
  it('a 0.05 s flick above inspect inside 0.65 s above log is one event, in log', () => {
    expect(classifyExcursion(PROFILE, 9400, BANDS)).toEqual({ bandId: 'log', secondsAbove: { log: expect.closeTo(0.65, 12), inspect: expect.closeTo(0.05, 12), teardown: 0 } })
  })

  it('the top band with no minimum duration takes a peak that reached it', () => {
    expect(classifyExcursion([[98500, 0.01], ...PROFILE], 9850, BANDS)?.bandId).toBe('teardown')
  })

  it('no band duration met: not an event', () => {
    expect(classifyExcursion([[91000, 0.1]], 9100, BANDS)).toBeNull()
  })
})

describe('reclassifyEvents after the bands are edited', () => {
  const fromFile: OverRevEvent = { bandId: 'log', startS: 10, durationS: 0.7, peakRpm: 9400, profile: PROFILE, secondsAbove: { log: 0.65, inspect: 0.05, teardown: 0 } }
  const byHand: OverRevEvent = { bandId: 'inspect', startS: 20, durationS: 0.3, peakRpm: 9450 }

  it('a shorter inspect minimum (0.05 s) moves the file event up to inspect; the hand-entered event keeps its band', () => {
    const edited = BANDS.map((b) => (b.id === 'inspect' ? { ...b, minDurationS: 0.05 } : b))
    const out = reclassifyEvents([fromFile, byHand], edited)
    expect(out.map((e) => e.bandId)).toEqual(['inspect', 'inspect'])
    expect(out[0]!.secondsAbove).toEqual({ log: expect.closeTo(0.65, 12), inspect: expect.closeTo(0.05, 12), teardown: 0 })
  })

  it('a log minimum raised to 1 s drops the file event (it no longer meets any band)', () => {
    const edited = BANDS.map((b) => (b.id === 'log' ? { ...b, minDurationS: 1 } : b))
    expect(reclassifyEvents([fromFile], edited)).toEqual([])
  })

  it('a hand-entered event whose band was removed takes the highest band its peak reached', () => {
    const edited = BANDS.filter((b) => b.id !== 'inspect')
    expect(reclassifyEvents([byHand], edited).map((e) => e.bandId)).toEqual(['log'])
  })
})

describe('damage of an excursion', () => {
  it('in equivalent hours, and beyond the same time at the rev limit (hand-computed)', () => {
    // 0.36 s at 9,900 rpm; reference 8,500, rev limit 9,200, p = 13
    const d = excursionDamage([[99000, 0.36]], 8500, 9200, 13)
    // by hand: (9900/8500)^13 = 7.25791; (9200/8500)^13 = 2.79767; 0.36 s = 1e-4 h
    expect(d.eqHours).toBeCloseTo(1e-4 * 7.25791, 8)
    expect(d.extraEqHours).toBeCloseTo(1e-4 * (7.25791 - 2.79767), 8)
  })
})
