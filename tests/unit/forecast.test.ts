import { describe, expect, it } from 'vitest'
import { mean } from 'simple-statistics'
import {
  eqPerRunningHour,
  forecastEngine,
  forecastPart,
  recentDuty,
  type EngineDuty,
  type EnginePartInput,
  type PlannedEvent,
} from '../../shared/domain/forecast'
import {
  emptyUsage,
  type EngineTypeLifeConfig,
  type OverRevEvent,
  type PartUsage,
} from '../../shared/domain/life'
import { momentsOfSegments } from '../../shared/domain/rpm-moments'
import { makeLifeConfig, makeLimits, makeOverRevBands, makeSession } from '../../db/fixtures'

// Invented engine type: 1,000 rpm bands, reference 8,000 rpm, a logged and a teardown band.
function makeCfg(overrides: Partial<EngineTypeLifeConfig> = {}): EngineTypeLifeConfig {
  const overRevBands = makeOverRevBands([['log', 8600, 0.2, 'logged'], ['strip', 9300, 0.05, 'teardown']])
  return makeLifeConfig({ referenceRpm: 8000, revLimitRpm: 8500, bandWidthRpm: 1000, overRevBands, ...overrides })
}

function makeUsage(overrides: Partial<PartUsage> = {}): PartUsage {
  return { ...emptyUsage(), ...overrides }
}

function makeOverRev(peakRpm: number, overrides: Partial<OverRevEvent> = {}): OverRevEvent {
  return { bandId: 'log', peakRpm, durationS: 0.3, startS: 50, ...overrides }
}

let nextEventId = 1
function makeEvent(overrides: Partial<PlannedEvent> = {}): PlannedEvent {
  const id = nextEventId++
  return { eventId: id, name: `Round ${id}`, startsAt: '2031-08-01T09:00:00Z', plannedSeconds: 3600, plannedKm: null, ...overrides }
}

function makeDuty(overrides: Partial<EngineDuty> = {}): EngineDuty {
  return { recent: [], runningSeconds: 0, kmPerHour: null, overRevsPerHour: {}, ...overrides }
}

/** One recent hour of running at steady rpm steps, with its rpm moments as a logger import keeps them. */
function dutyOf(segments: { rpm: number; seconds: number }[], overrides: Partial<EngineDuty> = {}): EngineDuty {
  const seconds = segments.reduce((t, x) => t + x.seconds, 0)
  const s = makeSession({ runningSeconds: seconds, rpmMoments: momentsOfSegments(segments) })
  return makeDuty({ recent: [s], runningSeconds: seconds, ...overrides })
}
const HALF_5500_HALF_7500 = [
  { rpm: 5500, seconds: 1800 },
  { rpm: 7500, seconds: 1800 },
]

function expectFractions(actual: { fraction: number }[], expected: number[]) {
  expect(actual.length).toBe(expected.length)
  actual.forEach((a, i) => expect(a.fraction).toBeCloseTo(expected[i]!, 6))
}

function histogramOf(entries: Record<number, number>): number[] {
  const max = Math.max(...Object.keys(entries).map(Number))
  return Array.from({ length: max + 1 }, (_, i) => entries[i] ?? 0)
}

// A constructed calendar, given out of date order on purpose. Known answers by hand for a part
// at 6 of 10 h and 500 of 1,000 km, running 100 km per hour, default event length 1,800 s:
//   Ashfold    1 h          -> 7.0 h (0.70), 600 km  ok
//   Brinmoor   default 0.5 h -> 7.5 h (0.75), 650 km  ok
//   Coldharbour 1 h, 120 km -> 8.5 h (0.85), 770 km  warning
//   Dunwick    1 h          -> 9.5 h (0.95), 870 km  due
//   Eskerby    1 h          -> 10.5 h (1.05), 970 km over
const ASHFOLD = makeEvent({ eventId: 201, name: 'Ashfold', startsAt: '2031-08-01T09:00:00Z' })
const BRINMOOR = makeEvent({ eventId: 202, name: 'Brinmoor', startsAt: '2031-08-15T09:00:00Z', plannedSeconds: null })
const COLDHARBOUR = makeEvent({ eventId: 203, name: 'Coldharbour', startsAt: '2031-09-01T09:00:00Z', plannedKm: 120 })
const DUNWICK = makeEvent({ eventId: 204, name: 'Dunwick', startsAt: '2031-09-15T09:00:00Z' })
const ESKERBY = makeEvent({ eventId: 205, name: 'Eskerby', startsAt: '2031-10-01T09:00:00Z' })
const CALENDAR = [DUNWICK, ASHFOLD, ESKERBY, COLDHARBOUR, BRINMOOR]
const OPTS = { defaultSecondsPerEvent: 1800 }

describe('forecastPart on a constructed calendar (known answers by hand)', () => {
  const cfg = makeCfg()
  const limits = makeLimits({ hours: 10, km: 1000 })
  const current = makeUsage({ hours: 6, km: 500 })
  const f = forecastPart(current, limits, cfg, CALENDAR, makeDuty({ kmPerHour: 100 }), OPTS)

  it('takes the events in date order', () => {
    expect(f.fractionAfter.map((x) => x.eventId)).toEqual([201, 202, 203, 204, 205])
  })

  it('projects the fraction after each event', () => {
    expect(f.fractionAfter.map((x) => x.fraction)).toEqual([0.7, 0.75, 0.85, 0.95, 1.05])
    expect(f.fractionAfter.map((x) => x.status)).toEqual(['ok', 'ok', 'warning', 'due', 'over'])
  })

  it('warning at Coldharbour, due at Dunwick, limit at Eskerby', () => {
    expect(f.warningAt).toEqual({ eventId: 203, name: 'Coldharbour' })
    expect(f.dueAt).toEqual({ eventId: 204, name: 'Dunwick' })
    expect(f.limitAt).toEqual({ eventId: 205, name: 'Eskerby' })
    expect(f.alreadyWarning).toBe(false)
    expect(f.alreadyOver).toBe(false)
  })

  it('does not change the current usage', () => {
    expect(current).toEqual(makeUsage({ hours: 6, km: 500 }))
  })

  it('km come from plannedKm, else running x km per hour: km governs when its limit is tighter', () => {
    const g = forecastPart(current, makeLimits({ hours: 100, km: 800 }), cfg, CALENDAR, makeDuty({ kmPerHour: 100 }), OPTS)
    // 600, 650, 770, 870, 970 km of 800
    expect(g.fractionAfter.map((x) => x.fraction)).toEqual([0.75, 0.8125, 0.9625, 1.0875, 1.2125])
    expect(g.warningAt?.name).toBe('Brinmoor')
    expect(g.limitAt?.name).toBe('Dunwick')
    expect(g.kmUnknown).toBe(false)
  })

  it('never reached: null', () => {
    const g = forecastPart(makeUsage(), makeLimits({ hours: 100 }), cfg, CALENDAR, makeDuty(), OPTS)
    expect(g.warningAt).toBeNull()
    expect(g.dueAt).toBeNull()
    expect(g.limitAt).toBeNull()
  })

  it('already at warning now: warningAt is null and alreadyWarning says so; the limit is still found', () => {
    const g = forecastPart(makeUsage({ hours: 8.5 }), limits, cfg, CALENDAR, makeDuty(), OPTS)
    expect(g.alreadyWarning).toBe(true)
    expect(g.warningAt).toBeNull()
    expect(g.alreadyDue).toBe(false)
    expect(g.dueAt?.name).toBe('Ashfold') // 9.5 h
    expect(g.limitAt?.name).toBe('Brinmoor') // 10.0 h: exactly 1.0 is over
  })

  it('already over now: limitAt is null, alreadyOver is true, every event projects over', () => {
    const g = forecastPart(makeUsage({ hours: 10 }), limits, cfg, CALENDAR, makeDuty(), OPTS)
    expect(g.alreadyOver).toBe(true)
    expect(g.alreadyWarning).toBe(true)
    expect(g.limitAt).toBeNull()
    expect(g.warningAt).toBeNull()
    expect(g.fractionAfter.every((x) => x.status === 'over')).toBe(true)
  })

  it('no events: nothing projected', () => {
    const g = forecastPart(current, limits, cfg, [], makeDuty(), OPTS)
    expect(g.fractionAfter).toEqual([])
    expect(g.limitAt).toBeNull()
  })
})

describe('equivalent hours in the forecast come from recent duty', () => {
  const cfg = makeCfg()

  it('eqPerRunningHour: half at 5,500 and half at 7,500 rpm, p = 1: 0.5 x 11/16 + 0.5 x 15/16 = 0.8125', () => {
    const duty = dutyOf(HALF_5500_HALF_7500)
    expect(eqPerRunningHour(duty, cfg, 1)).toBeCloseTo(0.8125, 8)
    expect(eqPerRunningHour(duty, cfg, 0)).toBeCloseTo(1, 12)
    // p = 13, by hand: 0.5 (5500/8000)^13 + 0.5 (7500/8000)^13 = 0.0038328 + 0.2160711 = 0.2199038
    expect(eqPerRunningHour(duty, cfg, 13)).toBeCloseTo(0.2199038, 5)
  })

  it('eq hours govern: 5 of 8 eq h, 0.8125 eq h per 1 h event -> warning after the 2nd, limit after the 4th', () => {
    const limits = makeLimits({ hours: null, eqHours: 8, damageExponent: 1 })
    const duty = dutyOf(HALF_5500_HALF_7500)
    const events = [1, 2, 3, 4].map((i) => makeEvent({ eventId: 300 + i, startsAt: `2031-08-0${i}T09:00:00Z` }))
    const f = forecastPart(makeUsage({ eqHours: 5 }), limits, cfg, events, duty, OPTS)
    // 5.8125, 6.625, 7.4375, 8.25 of 8
    expectFractions(f.fractionAfter, [0.7265625, 0.828125, 0.9296875, 1.03125])
    expect(f.warningAt?.eventId).toBe(302)
    expect(f.dueAt?.eventId).toBe(303)
    expect(f.limitAt?.eventId).toBe(304)
    expect(f.assumedDuty).toBe(false)
  })
})

describe('recentDuty', () => {
  const old = makeSession({ at: '2031-07-01T10:00:00Z', histogram: histogramOf({ 3: 3600 }), distanceKm: 50 })
  const s1 = makeSession({
    at: '2031-08-01T10:00:00Z',
    histogram: histogramOf({ 5: 1800, 7: 1800 }),
    distanceKm: 100,
    overRevs: [makeOverRev(8700), makeOverRev(8800)],
  })
  const s2 = makeSession({ at: '2031-08-03T10:00:00Z', histogram: histogramOf({ 7: 3600 }), distanceKm: 120 })

  it('uses the last N sessions by time (hand-computed: 25 % at band 5, 75 % at band 7, 110 km/h, 1 over-rev per hour)', () => {
    const duty = recentDuty([s2, old, s1], 2)
    expect(duty.recent.map((s) => s.sessionId)).toEqual([s2.sessionId, s1.sessionId])
    expect(duty.runningSeconds).toBe(7200)
    expect(duty.kmPerHour).toBe(110)
    expect(duty.overRevsPerHour).toEqual({ log: 1 })
    // these sessions have no rpm moments (entered by hand): band midpoints, p = 1: 0.25 x 11/16 + 0.75 x 15/16
    expect(eqPerRunningHour(duty, makeCfg(), 1)).toBeCloseTo(0.875, 14)
  })

  it('km per hour is total km over total running hours (cross-check with simple-statistics mean of equal-length sessions)', () => {
    const duty = recentDuty([old, s1, s2], 3)
    expect(duty.kmPerHour).toBeCloseTo(mean([50, 100, 120]), 12)
  })

  it('more sessions asked than exist: all of them', () => {
    expect(recentDuty([s1], 10).recent).toEqual([s1])
  })

  it('falls back to no duty when there are no sessions', () => {
    expect(recentDuty([], 5)).toEqual({ recent: [], runningSeconds: 0, kmPerHour: null, overRevsPerHour: {} })
    expect(recentDuty([s1, s2], 0)).toEqual({ recent: [], runningSeconds: 0, kmPerHour: null, overRevsPerHour: {} })
  })

  it('sessions with no running give no duty', () => {
    const idle = makeSession({ runningSeconds: 0, distanceKm: 0, histogram: [0, 0, 0] })
    expect(recentDuty([idle], 3)).toEqual({ recent: [], runningSeconds: 0, kmPerHour: null, overRevsPerHour: {} })
  })
})

describe('recent duty fallback in the forecast', () => {
  const cfg = makeCfg()

  it('no duty known: steady running at the rev limit, the worst case, (8,500 / 8,000)^13 = 2.1993 eq h per running hour, and flagged', () => {
    const duty = recentDuty([], 5)
    // by hand: 1.0625^13 = 2.1992581
    expect(eqPerRunningHour(duty, cfg, 13)).toBeCloseTo(2.1992581, 6)
    expect(eqPerRunningHour(duty, cfg, 0)).toBe(1)
    const limits = makeLimits({ hours: null, eqHours: 6, km: 1000, damageExponent: 13 })
    const events = [makeEvent({ startsAt: '2031-08-01T09:00:00Z' }), makeEvent({ startsAt: '2031-08-08T09:00:00Z', plannedKm: 90 })]
    const f = forecastPart(makeUsage({ eqHours: 2, km: 100 }), limits, cfg, events, duty, OPTS)
    expect(f.assumedDuty).toBe(true)
    // 2 + 2.1992581 = 4.1992581 of 6 (0.699876, ok); + 2.1992581 = 6.3985162 (1.066419, over)
    expectFractions(f.fractionAfter, [0.699876, 1.066419])
    expect(f.limitAt?.eventId).toBe(events[1]!.eventId)
    // the first event had neither planned km nor a km rate
    expect(f.kmUnknown).toBe(true)
  })

  it('"will finish" is never given on an easy assumption: with no duty, an event the engine could not finish at its rev limit is not fit to run', () => {
    // 1 h event; 1.5 eq h left of 10. At the reference rpm (the old assumption) it would finish with 0.5 eq h to spare.
    const limits = makeLimits({ hours: null, eqHours: 10, damageExponent: 13 })
    const ev = makeEvent({ startsAt: '2031-08-01T09:00:00Z' })
    const f = forecastPart(makeUsage({ eqHours: 8.5 }), limits, cfg, [ev], recentDuty([], 5), OPTS)
    const e = forecastEngine([{ componentId: 1, forecast: f, immediateInspection: false }], [ev])
    expect(e.canFinish[0]).toMatchObject({ ok: false, reason: 'projected-over' })
  })

  it('over-revs stay constant unless projection is asked for', () => {
    const limits = makeLimits({ hours: null, overRevEvents: { strip: 2 } })
    const duty = makeDuty({ overRevsPerHour: { strip: 0.5 } })
    const events = [makeEvent({ startsAt: '2031-08-01T09:00:00Z' }), makeEvent({ startsAt: '2031-08-08T09:00:00Z' })]
    const current = makeUsage({ overRevCounts: { strip: 1 } })
    expect(forecastPart(current, limits, cfg, events, duty, OPTS).fractionAfter.map((x) => x.fraction)).toEqual([0.5, 0.5])
    const projected = forecastPart(current, limits, cfg, events, duty, { ...OPTS, projectOverRevs: true })
    expect(projected.fractionAfter.map((x) => x.fraction)).toEqual([0.75, 1])
    expect(projected.limitAt?.eventId).toBe(events[1]!.eventId)
  })
})

describe('forecastEngine', () => {
  const cfg = makeCfg()
  const duty = dutyOf(HALF_5500_HALF_7500, { kmPerHour: 100 })
  // part 11: the hours case above (limit at Eskerby); part 12: 5 of 8 eq h at p = 1 (limit at Dunwick)
  const rod = forecastPart(makeUsage({ hours: 6, km: 500 }), makeLimits({ hours: 10, km: 1000 }), cfg, CALENDAR, duty, OPTS)
  const crank = forecastPart(makeUsage({ eqHours: 5 }), makeLimits({ hours: null, eqHours: 8, damageExponent: 1 }), cfg, CALENDAR, duty, OPTS)
  const parts: EnginePartInput[] = [
    { componentId: 11, forecast: rod, immediateInspection: false },
    { componentId: 12, forecast: crank, immediateInspection: false },
  ]

  it('hand check of the crank part on this calendar: 1, 0.5, 1, 1, 1 h at 0.8125 eq h per hour', () => {
    // 5.8125, 6.21875, 7.03125, 7.84375, 8.65625 of 8
    expectFractions(crank.fractionAfter, [0.7265625, 0.77734375, 0.87890625, 0.98046875, 1.08203125])
    expect(crank.limitAt?.name).toBe('Eskerby')
  })

  it('warningAt and limitAt are the earliest over the parts', () => {
    const e = forecastEngine(parts, CALENDAR)
    // rod warns at Coldharbour, crank at Coldharbour too (0.8789); crank due at Dunwick
    expect(e.warningAt?.name).toBe('Coldharbour')
    expect(e.limitAt?.name).toBe('Eskerby')
  })

  it('earliest uses the calendar order, not the order of the parts', () => {
    const early = forecastPart(makeUsage({ hours: 8 }), makeLimits({ hours: 10 }), cfg, CALENDAR, duty, OPTS)
    // 9, 9.5, 10.5: limit at Coldharbour
    expect(early.limitAt?.name).toBe('Coldharbour')
    const e = forecastEngine([...parts, { componentId: 13, forecast: early, immediateInspection: false }], CALENDAR)
    expect(e.limitAt?.name).toBe('Coldharbour')
    const reversed = forecastEngine([{ componentId: 13, forecast: early, immediateInspection: false }, ...parts], CALENDAR)
    expect(reversed.limitAt?.name).toBe('Coldharbour')
  })

  it('canFinish per event in date order, with the worst part', () => {
    const e = forecastEngine(parts, CALENDAR)
    expect(e.canFinish.map((c) => c.name)).toEqual(['Ashfold', 'Brinmoor', 'Coldharbour', 'Dunwick', 'Eskerby'])
    expect(e.canFinish.map((c) => c.ok)).toEqual([true, true, true, true, false])
    expectFractions(e.canFinish.map((c) => ({ fraction: c.worstFraction })), [0.7265625, 0.77734375, 0.87890625, 0.98046875, 1.08203125])
    expect(e.canFinish.map((c) => c.governingPartId)).toEqual([12, 12, 12, 12, 12])
    expect(e.canFinish[4]?.reason).toBe('projected-over')
    expect(e.canFinish[0]?.reason).toBeNull()
  })

  it('canFinish is false for every event when a part is already over', () => {
    const over = forecastPart(makeUsage({ hours: 10.2 }), makeLimits({ hours: 10 }), cfg, CALENDAR, duty, OPTS)
    const e = forecastEngine([...parts, { componentId: 14, forecast: over, immediateInspection: false }], CALENDAR)
    expect(e.canFinish.every((c) => !c.ok)).toBe(true)
    expect(e.canFinish.every((c) => c.reason === 'already-over')).toBe(true)
    expect(e.alreadyOver).toBe(true)
    expect(e.canFinish[0]?.governingPartId).toBe(14)
  })

  it('canFinish is false for every event while a position of the build has no part fitted', () => {
    const e = forecastEngine(parts, CALENDAR, { emptyPositions: 1 })
    expect(e.canFinish.map((c) => [c.ok, c.reason])).toEqual(CALENDAR.map(() => [false, 'incomplete-build']))
    // a part already over still reads first: it is the life figure that stops the engine
    const over = forecastPart(makeUsage({ hours: 10.2 }), makeLimits({ hours: 10 }), cfg, CALENDAR, duty, OPTS)
    const both = forecastEngine([...parts, { componentId: 14, forecast: over, immediateInspection: false }], CALENDAR, { emptyPositions: 2 })
    expect(both.canFinish[0]?.reason).toBe('already-over')
    expect(forecastEngine(parts, CALENDAR, { emptyPositions: 0 }).canFinish).toEqual(forecastEngine(parts, CALENDAR).canFinish)
  })

  it('canFinish is false for every event when a part is flagged for immediate inspection', () => {
    const flagged = parts.map((p, i) => (i === 0 ? { ...p, immediateInspection: true } : p))
    const e = forecastEngine(flagged, CALENDAR)
    expect(e.canFinish.map((c) => c.ok)).toEqual([false, false, false, false, false])
    expect(e.canFinish[0]?.reason).toBe('inspection')
  })

  it('a part with no projection for an event makes that event not ok (an unknown never reads as fit to run)', () => {
    const partial = { ...rod, fractionAfter: rod.fractionAfter.filter((x) => x.eventId !== 202) }
    const e = forecastEngine([{ componentId: 11, forecast: partial, immediateInspection: false }], CALENDAR)
    expect(e.canFinish.map((c) => c.ok)).toEqual([true, false, true, true, false])
    expect(e.canFinish[1]?.reason).toBe('no-projection')
  })

  it('a twelve-hour race: a part with 3 h left cannot reach the flag', () => {
    const race = makeEvent({ name: 'Twelve Hours of Marrowfield', startsAt: '2031-11-02T12:00:00Z', plannedSeconds: 12 * 3600 })
    const f = forecastPart(makeUsage({ hours: 37 }), makeLimits({ hours: 40 }), cfg, [race], duty, OPTS)
    expect(f.fractionAfter[0]?.fraction).toBeCloseTo(49 / 40, 12)
    const e = forecastEngine([{ componentId: 21, forecast: f, immediateInspection: false }], [race])
    expect(e.canFinish[0]).toMatchObject({ ok: false, governingPartId: 21, reason: 'projected-over' })
    expect(e.limitAt?.name).toBe('Twelve Hours of Marrowfield')
  })

  it('no parts: every event ok with nothing governing', () => {
    const e = forecastEngine([], CALENDAR)
    expect(e.canFinish.every((c) => c.ok && c.worstFraction === 0 && c.governingPartId === null)).toBe(true)
    expect(e.warningAt).toBeNull()
    expect(e.limitAt).toBeNull()
  })
})
