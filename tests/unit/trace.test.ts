// Trace analysis against traces built here with known answers, and against a plain
// step-by-step reference written in this file for random traces.
// Band levels and durations are invented demo values ("common practice" where marked).

import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import {
  MAX_LISTED_GAPS,
  OVERVIEW_MAX_POINTS,
  TraceConfigError,
  analyzeTrace,
  createTraceAnalyzer,
  createTraceBlock,
  type TraceConfig,
  type TraceSample,
} from '../../shared/domain/trace'
import { makeOverRevBands, makeTraceConfig } from '../../db/fixtures'

function makeConfig(over: Partial<TraceConfig> = {}): TraceConfig {
  // log / inspect / teardown above the rev limit: common practice (levels are demo values)
  const overRevBands = makeOverRevBands([['log', 9000, 0.1], ['inspect', 9300, 0.1], ['teardown', 9600, 0]], { hysteresisRpm: 150 })
  const lowOilPressure = { belowBar: 2, aboveRpm: 3000, minDurationS: 0.5 }
  return makeTraceConfig({ idleRpm: 2500, bandWidthRpm: 500, maxGapS: 1, overRevBands, lowOilPressure, trackLengthKm: null, laps: null, ...over })
}

/** Samples at `hz` from t0 for `seconds` (end excluded), each from fn(t). */
function run(t0: number, seconds: number, hz: number, fn: (t: number, k: number) => Omit<TraceSample, 't'>): TraceSample[] {
  const n = Math.round(seconds * hz)
  const out: TraceSample[] = []
  for (let k = 0; k < n; k++) {
    // integer sample index over hz keeps each time the correctly rounded decimal
    const t = (Math.round(t0 * hz) + k) / hz
    out.push({ t, ...fn(t, k) })
  }
  return out
}

describe('time step rule and histogram', () => {
  it('attributes the step k-1..k to sample k-1 and adds nothing for the last sample', () => {
    const s = analyzeTrace(makeConfig({ maxGapS: 10 }), [
      { t: 0, rpm: 3000 },
      { t: 1, rpm: 6000 },
      { t: 3, rpm: 6000 },
    ])
    expect(s.histogram[6]).toBe(1) // 3000 rpm for 0..1 s
    expect(s.histogram[12]).toBe(2) // 6000 rpm for 1..3 s
    expect(s.histogram.length).toBe(13)
    expect(s.runningSeconds).toBe(3)
    expect(s.durationS).toBe(3)
    expect(s.samples).toBe(3)
  })

  it('gives the exact seconds per band for constant rpm blocks', () => {
    const samples = [
      ...run(0, 20, 100, () => ({ rpm: 1200 })), // idle: not running
      ...run(20, 10, 100, () => ({ rpm: 3250 })), // band 6 (3000-3499)
      ...run(30, 5, 100, () => ({ rpm: 7600 })), // band 15 (7500-7999)
      ...run(35, 7.5, 100, () => ({ rpm: 8999 })), // band 17 (8500-8999)
      { t: 42.5, rpm: 1200 },
    ]
    const s = analyzeTrace(makeConfig(), samples)
    const expected = new Array(18).fill(0)
    expected[6] = 10
    expected[15] = 5
    expected[17] = 7.5
    expect(s.histogram).toEqual(expected)
    expect(s.runningSeconds).toBe(22.5)
    expect(s.durationS).toBe(42.5)
    expect(s.maxRpm).toBe(8999)
    expect(s.overRevs).toEqual([])
  })

  it('counts a band boundary rpm in the upper band (band i is [i*w, (i+1)*w))', () => {
    const s = analyzeTrace(makeConfig({ maxGapS: 10 }), [
      { t: 0, rpm: 5000 },
      { t: 2, rpm: 4999.9 },
      { t: 5, rpm: 4999.9 },
    ])
    expect(s.histogram[10]).toBe(2)
    expect(s.histogram[9]).toBe(3)
  })

  it('spreads a linear ramp evenly and leaves rpm equal to idle out of running time', () => {
    // t = k/10 s, rpm = 10k from 0 to 10,000 over 100 s; bands 1,000 rpm wide, idle 1,000
    const samples: TraceSample[] = []
    for (let k = 0; k <= 1000; k++) samples.push({ t: k / 10, rpm: 10 * k })
    const s = analyzeTrace(makeConfig({ idleRpm: 1000, bandWidthRpm: 1000, overRevBands: [] }), samples)
    expect(s.histogram[0]).toBe(0) // rpm 0..990: idle
    expect(s.histogram[1]).toBeCloseTo(9.9, 12) // rpm 1000 is not above idle: its 0.1 s is not counted
    for (let b = 2; b <= 9; b++) expect(s.histogram[b]).toBeCloseTo(10, 12)
    expect(s.histogram.length).toBe(10) // the last sample (10,000 rpm) adds no time
    expect(s.runningSeconds).toBeCloseTo(89.9, 12)
    expect(s.maxRpm).toBe(10000)
  })
})

describe('gaps', () => {
  it('reports a step longer than maxGapS and does not count it', () => {
    const samples = [...run(0, 10, 10, () => ({ rpm: 5000, speedKmh: 100 })), { t: 10, rpm: 5000, speedKmh: 100 }, ...run(15, 10, 10, () => ({ rpm: 5000, speedKmh: 100 })), { t: 25, rpm: 5000, speedKmh: 100 }]
    const s = analyzeTrace(makeConfig({ maxGapS: 1 }), samples)
    expect(s.gaps).toEqual([{ atS: 10, seconds: 5 }])
    expect(s.gapCount).toBe(1)
    expect(s.gapSeconds).toBe(5)
    expect(s.runningSeconds).toBe(20)
    expect(s.histogram[10]).toBe(20)
    expect(s.durationS).toBe(25)
    expect(s.distanceKm).toBeCloseTo((100 * 20) / 3600, 12)
  })

  it('counts a step of exactly maxGapS', () => {
    const s = analyzeTrace(makeConfig({ maxGapS: 0.5 }), [
      { t: 0, rpm: 4000 },
      { t: 0.5, rpm: 4000 },
      { t: 1.25, rpm: 4000 },
    ])
    expect(s.runningSeconds).toBe(0.5)
    expect(s.gaps).toEqual([{ atS: 0.5, seconds: 0.75 }])
  })

  it('ends an open over-rev at the sample before a gap', () => {
    const samples = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.5, 100, () => ({ rpm: 9100 })), { t: 1.5, rpm: 9100 }, ...run(4, 1, 100, () => ({ rpm: 8000 }))]
    const s = analyzeTrace(makeConfig({ maxGapS: 1 }), samples)
    expect(s.overRevs).toHaveLength(1)
    expect(s.overRevs[0]!.startS).toBe(1)
    expect(s.overRevs[0]!.durationS).toBeCloseTo(0.5, 12)
  })

  it('lists at most MAX_LISTED_GAPS gaps but counts all', () => {
    const samples: TraceSample[] = []
    for (let k = 0; k <= MAX_LISTED_GAPS + 10; k++) samples.push({ t: k * 2, rpm: 4000 })
    const s = analyzeTrace(makeConfig({ maxGapS: 1 }), samples)
    expect(s.gaps).toHaveLength(MAX_LISTED_GAPS)
    expect(s.gapCount).toBe(MAX_LISTED_GAPS + 10)
    expect(s.gapSeconds).toBe(2 * (MAX_LISTED_GAPS + 10))
    expect(s.runningSeconds).toBe(0)
  })
})

/** The event as the session lists it, without its time-at-rpm profile. */
const core = (events: { bandId: string; startS: number; durationS: number; peakRpm: number }[]) =>
  events.map(({ bandId, startS, durationS, peakRpm }) => ({ bandId, startS, durationS, peakRpm }))

describe('over-rev events', () => {
  const chatter = () => [
    ...run(0, 1, 100, () => ({ rpm: 8000 })),
    // 9050 / 8950 alternating for 1 s: above, then below the 9000 threshold but not below 9000 - 150
    ...run(1, 1, 100, (_t, k) => ({ rpm: k % 2 === 0 ? 9050 : 8950 })),
    ...run(2, 1, 100, () => ({ rpm: 8000 })),
  ]

  it('counts chatter around the threshold once thanks to hysteresis', () => {
    const s = analyzeTrace(makeConfig(), chatter())
    expect(core(s.overRevs)).toEqual([{ bandId: 'log', startS: 1, durationS: 1, peakRpm: 9050 }])
  })

  it('without hysteresis the same chatter is 50 separate 0.01 s excursions', () => {
    const bands = [{ id: 'log', label: 'Logged', minRpm: 9000, minDurationS: 0, hysteresisRpm: 0 }]
    const s = analyzeTrace(makeConfig({ overRevBands: bands }), chatter())
    expect(s.overRevs).toHaveLength(50)
    for (const e of s.overRevs) expect(e.durationS).toBeCloseTo(0.01, 12)
    // and with a minimum duration none of them is an event
    const s2 = analyzeTrace(makeConfig({ overRevBands: [{ ...bands[0]!, minDurationS: 0.1 }] }), chatter())
    expect(s2.overRevs).toEqual([])
  })

  it('drops an excursion shorter than minDurationS and keeps one of exactly minDurationS', () => {
    const short = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.05, 100, () => ({ rpm: 9100 })), ...run(1.05, 1, 100, () => ({ rpm: 8000 }))]
    expect(analyzeTrace(makeConfig(), short).overRevs).toEqual([])
    const exact = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.1, 100, () => ({ rpm: 9100 })), ...run(1.1, 1, 100, () => ({ rpm: 8000 }))]
    const s = analyzeTrace(makeConfig(), exact)
    expect(s.overRevs).toHaveLength(1)
    expect(s.overRevs[0]!.durationS).toBeCloseTo(0.1, 12)
  })

  it('assigns an event to the highest band its peak entered', () => {
    // one 0.3 s excursion that touches 9700 rpm for a single sample
    const samples = [
      ...run(0, 1, 100, () => ({ rpm: 8000 })),
      ...run(1, 0.3, 100, (_t, k) => ({ rpm: k === 10 ? 9700 : 9100 })),
      ...run(1.3, 1, 100, () => ({ rpm: 8000 })),
    ]
    expect(core(analyzeTrace(makeConfig(), samples).overRevs)).toEqual([{ bandId: 'teardown', startS: 1, durationS: expect.closeTo(0.3, 12), peakRpm: 9700 }])
  })

  it('a missed downshift straight into the top band counts there even for one sample (minDurationS 0)', () => {
    const samples = [...run(0, 1, 100, () => ({ rpm: 7000 })), { t: 1, rpm: 9800 }, ...run(1.01, 1, 100, () => ({ rpm: 7000 }))]
    const s = analyzeTrace(makeConfig(), samples)
    expect(core(s.overRevs)).toEqual([{ bandId: 'teardown', startS: 1, durationS: expect.closeTo(0.01, 12), peakRpm: 9800 }])
  })

  it('falls back to a lower band when the peak band duration is not met', () => {
    const bands = [
      { id: 'log', label: 'Logged', minRpm: 9000, minDurationS: 0.05, hysteresisRpm: 100 },
      { id: 'inspect', label: 'Inspect', minRpm: 9300, minDurationS: 0.5, hysteresisRpm: 100 },
    ]
    const samples = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.2, 100, () => ({ rpm: 9400 })), ...run(1.2, 1, 100, () => ({ rpm: 8000 }))]
    const s = analyzeTrace(makeConfig({ overRevBands: bands }), samples)
    expect(s.overRevs.map((e) => e.bandId)).toEqual(['log'])
  })

  it('closes an excursion still open at the end of the trace', () => {
    const samples = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.5, 100, () => ({ rpm: 9200 })), { t: 1.5, rpm: 9200 }]
    const s = analyzeTrace(makeConfig(), samples)
    expect(core(s.overRevs)).toEqual([{ bandId: 'log', startS: 1, durationS: 0.5, peakRpm: 9200 }])
  })

  it('a short spike above a higher band inside a longer lower-band excursion counts once, against the band whose duration it met', () => {
    // 0.8 s at 9,100 rpm (log) with a 0.05 s flick to 9,400 rpm (inspect needs 0.1 s) in the middle
    const samples = [
      ...run(0, 1, 100, () => ({ rpm: 8000 })),
      ...run(1, 0.8, 100, (_t, k) => ({ rpm: k >= 40 && k < 45 ? 9400 : 9100 })),
      ...run(1.8, 1, 100, () => ({ rpm: 8000 })),
    ]
    const s = analyzeTrace(makeConfig(), samples)
    expect(core(s.overRevs)).toEqual([{ bandId: 'log', startS: 1, durationS: expect.closeTo(0.8, 9), peakRpm: 9400 }])
    // time at or above each threshold, by hand: 80 steps of 0.01 s above 9,000, 5 of them above 9,300
    expect(s.overRevs[0]!.secondsAbove!.log).toBeCloseTo(0.8, 9)
    expect(s.overRevs[0]!.secondsAbove!.inspect).toBeCloseTo(0.05, 9)
    expect(s.overRevs[0]!.secondsAbove!.teardown).toBe(0)
    // the same flick held for 0.1 s meets the inspect band's duration
    const longer = samples.map((x) => (x.t >= 1.4 - 1e-9 && x.t < 1.5 - 1e-9 ? { ...x, rpm: 9400 } : x))
    expect(analyzeTrace(makeConfig(), longer).overRevs.map((e) => e.bandId)).toEqual(['inspect'])
  })

  it('measures a band by the time spent at or above its threshold, not by the whole excursion (hysteresis keeps the excursion whole)', () => {
    // 0.3 s at 9,050 then 0.3 s at 8,900 (below 9,000 but above the 8,850 release): one excursion of 0.6 s, 0.3 s above 9,000
    const bands = [{ id: 'log', label: 'Logged', minRpm: 9000, minDurationS: 0.4, hysteresisRpm: 150 }]
    const samples = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.3, 100, () => ({ rpm: 9050 })), ...run(1.3, 0.3, 100, () => ({ rpm: 8900 })), ...run(1.6, 1, 100, () => ({ rpm: 8000 }))]
    expect(analyzeTrace(makeConfig({ overRevBands: bands }), samples).overRevs).toEqual([])
    const s = analyzeTrace(makeConfig({ overRevBands: [{ ...bands[0]!, minDurationS: 0.3 }] }), samples)
    expect(core(s.overRevs)).toEqual([{ bandId: 'log', startS: 1, durationS: expect.closeTo(0.6, 9), peakRpm: 9050 }])
  })

  it('bands may come in any order', () => {
    const cfg = makeConfig()
    const shuffled = makeConfig({ overRevBands: [cfg.overRevBands[2]!, cfg.overRevBands[0]!, cfg.overRevBands[1]!] })
    const samples = [...run(0, 1, 100, () => ({ rpm: 8000 })), ...run(1, 0.3, 100, () => ({ rpm: 9400 })), ...run(1.3, 1, 100, () => ({ rpm: 8000 }))]
    expect(analyzeTrace(shuffled, samples).overRevs).toEqual(analyzeTrace(cfg, samples).overRevs)
    expect(analyzeTrace(cfg, samples).overRevs[0]!.bandId).toBe('inspect')
  })
})

describe('low oil pressure', () => {
  it('finds a dip below the limit above the rpm set point and keeps its minimum', () => {
    const samples = [
      ...run(0, 2, 100, () => ({ rpm: 6000, oilPressureBar: 4.5 })),
      ...run(2, 1.2, 100, (_t, k) => ({ rpm: 6000, oilPressureBar: k === 60 ? 1.2 : 1.5 })),
      ...run(3.2, 2, 100, () => ({ rpm: 6000, oilPressureBar: 4.5 })),
    ]
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.lowOilPressure).toEqual([{ startS: 2, durationS: expect.closeTo(1.2, 12), minBar: 1.2 }])
    expect(s.minOilPressureBar).toBe(1.2)
  })

  it('ignores low pressure at idle and dips shorter than minDurationS', () => {
    const samples = [
      ...run(0, 5, 100, () => ({ rpm: 1200, oilPressureBar: 0.8 })), // idle: normal for a dry sump at low rpm
      ...run(5, 2, 100, () => ({ rpm: 6000, oilPressureBar: 4.5 })),
      ...run(7, 0.3, 100, () => ({ rpm: 6000, oilPressureBar: 1.5 })),
      ...run(7.3, 2, 100, () => ({ rpm: 6000, oilPressureBar: 4.5 })),
    ]
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.lowOilPressure).toEqual([])
    expect(s.minOilPressureBar).toBe(1.5) // the idle 0.8 bar is not "while running"
  })

  it('a sample without a pressure value ends the run', () => {
    const samples = [
      ...run(0, 1, 100, () => ({ rpm: 6000, oilPressureBar: 1.5 })),
      { t: 1, rpm: 6000 },
      ...run(1.01, 1, 100, () => ({ rpm: 6000, oilPressureBar: 1.5 })),
    ]
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.lowOilPressure.map((e) => [e.startS, Number(e.durationS.toFixed(9))])).toEqual([[0, 1], [1.01, 0.99]])
  })
})

describe('distance', () => {
  it('from constant speed: 180 km/h for 60 s is 3 km', () => {
    const samples = [...run(0, 60, 10, () => ({ rpm: 7000, speedKmh: 180 })), { t: 60, rpm: 7000, speedKmh: 180 }]
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.distanceSource).toBe('speed')
    expect(s.distanceKm).toBeCloseTo(3, 10)
    expect(s.maxSpeedKmh).toBe(180)
  })

  it('from a linear speed ramp (the trapezoid is exact): 0 to 100 km/h in 36 s is 0.5 km', () => {
    const samples: TraceSample[] = []
    for (let k = 0; k <= 360; k++) samples.push({ t: k / 10, rpm: 5000, speedKmh: (100 * k) / 360 })
    expect(analyzeTrace(makeConfig(), samples).distanceKm).toBeCloseTo(0.5, 12)
  })

  it('prefers the speed channel over laps', () => {
    const samples = [...run(0, 36, 10, () => ({ rpm: 7000, speedKmh: 100 })), { t: 36, rpm: 7000, speedKmh: 100 }]
    const s = analyzeTrace(makeConfig({ laps: 10, trackLengthKm: 4 }), samples)
    expect(s.distanceSource).toBe('speed')
    expect(s.distanceKm).toBeCloseTo(1, 12)
  })

  it('from laps times track length when there is no speed channel', () => {
    const samples = run(0, 10, 10, () => ({ rpm: 7000 }))
    const s = analyzeTrace(makeConfig({ laps: 12, trackLengthKm: 4.07 }), samples)
    expect(s.distanceSource).toBe('laps')
    expect(s.distanceKm).toBeCloseTo(48.84, 12)
    expect(s.maxSpeedKmh).toBeNull()
  })

  it('none without speed, laps or track length', () => {
    const s = analyzeTrace(makeConfig({ laps: 12 }), run(0, 10, 10, () => ({ rpm: 7000 })))
    expect(s.distanceSource).toBe('none')
    expect(s.distanceKm).toBe(0)
  })
})

describe('maxima and overview', () => {
  it('keeps maxima of each channel and nulls for absent channels', () => {
    const samples = run(0, 10, 10, (_t, k) => ({ rpm: 4000 + k, oilTempC: 90 + (k % 7), waterTempC: 80 + (k % 5), speedKmh: k }))
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.maxRpm).toBe(4099)
    expect(s.maxOilTempC).toBe(96)
    expect(s.maxWaterTempC).toBe(84)
    expect(s.maxSpeedKmh).toBe(99)
    expect(s.minOilPressureBar).toBeNull()
    const bare = analyzeTrace(makeConfig(), run(0, 1, 10, () => ({ rpm: 4000 })))
    expect([bare.maxOilTempC, bare.maxWaterTempC, bare.maxSpeedKmh, bare.minOilPressureBar]).toEqual([null, null, null, null])
  })

  it('keeps every sample while there are fewer than the overview limit', () => {
    const samples = run(0, 10, 10, (_t, k) => ({ rpm: 3000 + 10 * k }))
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.overview).toEqual(samples.map((x) => ({ t: x.t, rpm: x.rpm })))
  })

  it('downsamples a long trace to at most the limit and keeps a one-sample peak', () => {
    const samples = run(0, 3600, 100, (_t, k) => ({ rpm: k === 123_457 ? 9850 : 6000 + (k % 1000) }))
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.overview.length).toBeLessThanOrEqual(OVERVIEW_MAX_POINTS)
    expect(s.overview.length).toBeGreaterThan(OVERVIEW_MAX_POINTS / 2)
    expect(Math.max(...s.overview.map((p) => p.rpm))).toBe(9850)
    expect(s.overview.find((p) => p.rpm === 9850)!.t).toBe(1234.57)
    for (let i = 1; i < s.overview.length; i++) expect(s.overview[i]!.t).toBeGreaterThan(s.overview[i - 1]!.t)
  })

  it('reports times from the first sample and keeps the first time', () => {
    const samples = [...run(1000, 1, 100, () => ({ rpm: 8000 })), ...run(1001, 0.5, 100, () => ({ rpm: 9100 })), ...run(1001.5, 1, 100, () => ({ rpm: 8000 }))]
    const s = analyzeTrace(makeConfig(), samples)
    expect(s.firstSampleT).toBe(1000)
    expect(s.overRevs[0]!.startS).toBeCloseTo(1, 9)
    expect(s.overview[0]!.t).toBe(0)
  })
})

describe('inputs', () => {
  it('refuses time that does not increase, non-finite time and rpm out of range', () => {
    const a = createTraceAnalyzer(makeConfig())
    a.push({ t: 1, rpm: 3000 })
    expect(() => a.push({ t: 1, rpm: 3000 })).toThrow(RangeError)
    expect(() => a.push({ t: 0.5, rpm: 3000 })).toThrow(/must increase/)
    expect(() => a.push({ t: Number.NaN, rpm: 3000 })).toThrow(RangeError)
    expect(() => a.push({ t: 2, rpm: -1 })).toThrow(/rpm/)
    expect(() => a.push({ t: 2, rpm: 1e9 })).toThrow(/rpm/)
    expect(() => a.push({ t: 2, rpm: Number.NaN })).toThrow(/rpm/)
  })

  it('refuses an invalid configuration', () => {
    expect(() => createTraceAnalyzer(makeConfig({ bandWidthRpm: 0 }))).toThrow(TraceConfigError)
    expect(() => createTraceAnalyzer(makeConfig({ maxGapS: -1 }))).toThrow(TraceConfigError)
    expect(() => createTraceAnalyzer(makeConfig({ idleRpm: Number.NaN }))).toThrow(TraceConfigError)
    const b = makeConfig().overRevBands[0]!
    expect(() => createTraceAnalyzer(makeConfig({ overRevBands: [b, b] }))).toThrow(/unique/)
  })

  it('an empty trace gives zeros', () => {
    const s = createTraceAnalyzer(makeConfig()).finish()
    expect(s).toMatchObject({ samples: 0, durationS: 0, runningSeconds: 0, distanceKm: 0, histogram: [], overRevs: [], overview: [], maxRpm: 0 })
  })

  it('pushValues with NaN gives the same summary as push with absent fields, and a reused sample object is safe', () => {
    const samples = run(0, 30, 50, (t, k) => ({
      rpm: 5000 + 4300 * Math.sin(t / 3) ** 2,
      speedKmh: k % 17 === 0 ? undefined : 150 + 50 * Math.sin(t),
      oilPressureBar: 1.5 + 3 * Math.cos(t / 2) ** 2,
      oilTempC: 100 + t / 10,
    }))
    const a = createTraceAnalyzer(makeConfig())
    const b = createTraceAnalyzer(makeConfig())
    const reused: TraceSample = { t: 0, rpm: 0 }
    for (const s of samples) {
      a.pushValues(s.t, s.rpm, s.speedKmh ?? Number.NaN, s.oilTempC ?? Number.NaN, s.oilPressureBar ?? Number.NaN, Number.NaN)
      Object.assign(reused, s)
      reused.speedKmh = s.speedKmh
      b.push(reused)
    }
    const sa = a.finish()
    expect(sa).toEqual(b.finish())
    expect(sa).toEqual(analyzeTrace(makeConfig(), samples))
    expect(sa.overRevs.length).toBeGreaterThan(0)
    expect(sa.lowOilPressure.length).toBeGreaterThan(0)
  })
})

// A plain reference of the time step rule, one step at a time, for random traces.
function referenceFigures(cfg: TraceConfig, samples: TraceSample[]) {
  const hist: number[] = []
  let running = 0
  let idle = 0
  let gaps = 0
  for (let k = 1; k < samples.length; k++) {
    const dt = samples[k]!.t - samples[k - 1]!.t
    if (dt > cfg.maxGapS) {
      gaps += dt
      continue
    }
    const rpm = samples[k - 1]!.rpm
    if (rpm > cfg.idleRpm) {
      const b = Math.floor(rpm / cfg.bandWidthRpm)
      hist[b] = (hist[b] ?? 0) + dt
      running += dt
    } else idle += dt
  }
  return { hist, running, idle, gaps }
}

describe('against a step-by-step reference (property test)', () => {
  it('histogram, running time and gaps agree for random traces', () => {
    const trace = fc.array(
      fc.record({ dt: fc.oneof(fc.constant(0.01), fc.double({ min: 0.001, max: 3, noNaN: true })), rpm: fc.integer({ min: 0, max: 11000 }) }),
      { minLength: 1, maxLength: 300 },
    )
    fc.assert(
      fc.property(trace, (steps) => {
        const cfg = makeConfig({ maxGapS: 1 })
        let t = 0
        const samples = steps.map((s) => ({ t: (t += s.dt), rpm: s.rpm }))
        const got = analyzeTrace(cfg, samples)
        const ref = referenceFigures(cfg, samples)
        const len = Math.max(got.histogram.length, ref.hist.length)
        for (let b = 0; b < len; b++) expect(got.histogram[b] ?? 0).toBeCloseTo(ref.hist[b] ?? 0, 9)
        expect(got.runningSeconds).toBeCloseTo(ref.running, 9)
        expect(got.gapSeconds).toBeCloseTo(ref.gaps, 9)
        expect(got.runningSeconds + ref.idle + got.gapSeconds).toBeCloseTo(got.durationS, 9)
        expect(got.histogram.reduce((a, b) => a + b, 0)).toBeCloseTo(got.runningSeconds, 9)
        for (const e of got.overRevs) {
          const band = cfg.overRevBands.find((b) => b.id === e.bandId)!
          expect(e.peakRpm).toBeGreaterThanOrEqual(band.minRpm)
          expect(e.durationS + 1e-9).toBeGreaterThanOrEqual(band.minDurationS)
        }
      }),
      { numRuns: 300 },
    )
  })
})

describe('blocks of samples', () => {
  const sampleArb = fc.record({
    dt: fc.oneof(fc.constant(0.01), fc.double({ min: 0.001, max: 3, noNaN: true })),
    rpm: fc.integer({ min: 0, max: 11000 }),
    speed: fc.option(fc.double({ min: 0, max: 330, noNaN: true }), { nil: undefined }),
    oilP: fc.option(fc.double({ min: 0, max: 7, noNaN: true }), { nil: undefined }),
    oilT: fc.option(fc.double({ min: 60, max: 140, noNaN: true }), { nil: undefined }),
  })

  it('give the same summary as pushing the samples one by one, however the blocks are cut', () => {
    fc.assert(
      fc.property(fc.array(sampleArb, { minLength: 1, maxLength: 400 }), fc.integer({ min: 1, max: 64 }), (steps, blockSize) => {
        const cfg = makeConfig()
        let t = 0
        const samples: TraceSample[] = steps.map((s) => ({ t: (t += s.dt), rpm: s.rpm, speedKmh: s.speed, oilPressureBar: s.oilP, oilTempC: s.oilT }))
        const one = analyzeTrace(cfg, samples)
        const a = createTraceAnalyzer(cfg)
        const block = createTraceBlock(blockSize)
        for (let i = 0; i < samples.length; i += blockSize) {
          const part = samples.slice(i, i + blockSize)
          part.forEach((s, k) => {
            block.t[k] = s.t
            block.rpm[k] = s.rpm
            block.speedKmh[k] = s.speedKmh ?? NaN
            block.oilTempC[k] = s.oilTempC ?? NaN
            block.oilPressureBar[k] = s.oilPressureBar ?? NaN
            block.waterTempC[k] = NaN
          })
          a.pushBlock(block, part.length)
        }
        expect(a.finish()).toEqual(one)
      }),
      { numRuns: 200 },
    )
  })

  it('a block with one bad sample is refused whole and changes nothing', () => {
    const cfg = makeConfig()
    const a = createTraceAnalyzer(cfg)
    a.push({ t: 0, rpm: 6000 })
    const block = createTraceBlock(3)
    block.t.set([0.01, 0.02, 0.02])
    block.rpm.set([6000, 9700, 6000])
    expect(() => a.pushBlock(block, 3)).toThrow(/must increase/)
    block.t.set([0.01, 0.02, 0.03])
    block.rpm.set([6000, 6000, Number.NaN])
    expect(() => a.pushBlock(block, 3)).toThrow(/rpm/)
    expect(() => a.pushBlock(block, 4)).toThrow(/larger than the block/)
    a.push({ t: 0.01, rpm: 6000 })
    const s = a.finish()
    expect([s.samples, s.maxRpm, s.overRevs.length]).toEqual([2, 6000, 0])
    expect(s.runningSeconds).toBeCloseTo(0.01, 12)
  })
})
