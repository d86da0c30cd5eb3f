// The session charts' data: the analyzer's per-bucket channel ranges, their downsampling for the
// browser and the event markers. Every expected value is worked out by hand from the inputs.
import { describe, expect, it } from 'vitest'
import { analyzeTrace, OVERVIEW_MAX_POINTS, type TraceConfig, type TraceOverview } from '../../shared/domain/trace'
import { downsampleOverview, overviewFromRpmPoints, traceChart } from '../../shared/domain/trace/chart'

const cfg: TraceConfig = {
  idleRpm: 1500,
  bandWidthRpm: 500,
  maxGapS: 1,
  overRevBands: [{ id: 'A', label: 'Logged', minRpm: 9000, hysteresisRpm: 100, minDurationS: 0 }],
  lowOilPressure: { belowBar: 1.5, aboveRpm: 3000, minDurationS: 0 },
  trackLengthKm: null,
  laps: null,
}

/** Ten buckets whose values are easy to follow: rpm 1000·(i+1) up and 100 less down, oil pressure 5 − i / 10. */
function tenBuckets(): TraceOverview {
  const idx = [...Array(10).keys()]
  return {
    t0: idx.map((i) => i * 10),
    t1: idx.map((i) => i * 10 + 9),
    channels: {
      rpm: { min: idx.map((i) => 1000 * (i + 1) - 100), max: idx.map((i) => 1000 * (i + 1)) },
      oilTempC: { min: idx.map((i) => (i === 3 ? null : 80 + i)), max: idx.map((i) => (i === 3 ? null : 81 + i)) },
      oilPressureBar: { min: idx.map((i) => 5 - i / 10), max: idx.map(() => 6) },
      waterTempC: null,
      speedKmh: { min: idx.map(() => 0), max: idx.map((i) => (i === 6 ? 251 : 200)) },
    },
  }
}

describe('downsampling the overview', () => {
  it('merges pairs: every output bucket holds the lowest min and highest max of its pair', () => {
    const d = downsampleOverview(tenBuckets(), 5)
    expect(d.t0).toEqual([0, 20, 40, 60, 80])
    expect(d.t1).toEqual([19, 39, 59, 79, 99])
    expect(d.channels.rpm).toEqual({ min: [900, 2900, 4900, 6900, 8900], max: [2000, 4000, 6000, 8000, 10000] })
    // bucket 3 had no oil temperature: its pair keeps bucket 2's values
    expect(d.channels.oilTempC).toEqual({ min: [80, 82, 84, 86, 88], max: [82, 83, 86, 88, 90] })
    expect(d.channels.oilPressureBar!.min.map((v) => Number(v!.toFixed(10)))).toEqual([4.9, 4.7, 4.5, 4.3, 4.1])
    expect(d.channels.waterTempC).toBeNull()
    // the single fast bucket (6) survives in its pair
    expect(d.channels.speedKmh!.max).toEqual([200, 200, 200, 251, 200])
  })

  it('uneven runs: ten buckets into four take three, three, three and one', () => {
    const d = downsampleOverview(tenBuckets(), 4)
    expect(d.t0).toEqual([0, 30, 60, 90])
    expect(d.t1).toEqual([29, 59, 89, 99])
    expect(d.channels.rpm).toEqual({ min: [900, 3900, 6900, 9900], max: [3000, 6000, 9000, 10000] })
    expect(d.channels.speedKmh!.max).toEqual([200, 200, 251, 200])
  })

  it('keeps the overview as it is when it is already small enough, and refuses a size below one', () => {
    expect(downsampleOverview(tenBuckets(), 600)).toEqual(tenBuckets())
    expect(() => downsampleOverview(tenBuckets(), 0)).toThrow(RangeError)
  })

  it('a bucket with no value of a channel in its whole run stays empty (null)', () => {
    const ov = tenBuckets()
    ov.channels.oilTempC!.min[2] = null
    ov.channels.oilTempC!.max[2] = null
    expect(downsampleOverview(ov, 5).channels.oilTempC!.max).toEqual([82, null, 86, 88, 90])
  })
})

describe('event markers', () => {
  it('keeps one marker per event, in time order, however many share a bucket', () => {
    const c = traceChart(
      tenBuckets(),
      {
        overRevs: [
          { startS: 41, durationS: 0.5, peakRpm: 4500, bandId: 'A' },
          { startS: 42, durationS: 0.25, peakRpm: 4600, bandId: 'A' },
          { startS: 44, durationS: 1, peakRpm: 4800, bandId: 'B' },
        ],
        lowOilPressure: [{ startS: 43, durationS: 2, minBar: 4.7 }],
      },
      2,
    )
    expect(c.markers).toEqual([
      { kind: 'over-rev', channel: 'rpm', startS: 41, endS: 41.5, value: 4500, bandId: 'A' },
      { kind: 'over-rev', channel: 'rpm', startS: 42, endS: 42.25, value: 4600, bandId: 'A' },
      { kind: 'low-oil-pressure', channel: 'oilPressureBar', startS: 43, endS: 45, value: 4.7 },
      { kind: 'over-rev', channel: 'rpm', startS: 44, endS: 45, value: 4800, bandId: 'B' },
    ])
    // the overview already reaches these extremes (5000 rpm max, 4.6 bar min in bucket 0 of 2): unchanged
    expect(c.overview.channels.rpm!.max).toEqual([5000, 10000])
    expect(c.overview.channels.oilPressureBar!.min.map((v) => Number(v!.toFixed(10)))).toEqual([4.6, 4.1])
  })

  it('widens the bucket where an event starts when no bucket it spans reaches its extreme', () => {
    const c = traceChart(
      tenBuckets(),
      { overRevs: [{ startS: 25, durationS: 3, peakRpm: 9300, bandId: 'A' }], lowOilPressure: [{ startS: 70, durationS: 15, minBar: 0.8 }] },
      5,
    )
    // bucket 1 (20–39 s) had 4000 rpm at most; bucket 3 (60–79 s) 4.3 bar at least
    expect(c.overview.channels.rpm!.max).toEqual([2000, 9300, 6000, 8000, 10000])
    expect(c.overview.channels.oilPressureBar!.min.map((v) => Number(v!.toFixed(10)))).toEqual([4.9, 4.7, 4.5, 0.8, 4.1])
  })

  it('an over-rev whose peak a later bucket it spans already shows leaves the overview alone', () => {
    const c = traceChart(tenBuckets(), { overRevs: [{ startS: 15, durationS: 10, peakRpm: 2800, bandId: 'A' }], lowOilPressure: [] }, 10)
    expect(c.overview.channels.rpm!.max).toEqual([1000, 2000, 3000, 4000, 5000, 6000, 7000, 8000, 9000, 10000])
  })

  it('an overview stored before channels were kept charts rpm alone', () => {
    const ov = overviewFromRpmPoints([{ t: 0, rpm: 4000 }, { t: 1.5, rpm: 9100 }])
    expect(ov).toEqual({ t0: [0, 1.5], t1: [0, 1.5], channels: { rpm: { min: [4000, 9100], max: [4000, 9100] }, oilTempC: null, oilPressureBar: null, waterTempC: null, speedKmh: null } })
  })
})

describe('the analyzer keeps every channel per bucket', () => {
  it('short trace: one sample per bucket, min and max are that sample; an absent channel is null', () => {
    const samples = [
      { t: 0, rpm: 3000, oilTempC: 90, oilPressureBar: 4 },
      { t: 0.1, rpm: 6000, oilTempC: 91, oilPressureBar: 4.5 },
      { t: 0.2, rpm: 5000, oilPressureBar: 4.2 },
    ]
    const s = analyzeTrace(cfg, samples)
    expect(s.channels).toEqual({
      t0: [0, 0.1, 0.2],
      t1: [0, 0.1, 0.2],
      channels: {
        rpm: { min: [3000, 6000, 5000], max: [3000, 6000, 5000] },
        oilTempC: { min: [90, 91, null], max: [90, 91, null] },
        oilPressureBar: { min: [4, 4.5, 4.2], max: [4, 4.5, 4.2] },
        waterTempC: null,
        speedKmh: null,
      },
    })
  })

  it('long trace: a one-sample oil pressure dip and a one-sample speed peak survive the merging', () => {
    // one hour at 100 Hz: 360 000 samples, far more than the overview's buckets
    const n = 360_000
    const samples = (function* () {
      for (let k = 0; k < n; k++) {
        yield {
          t: k / 100,
          rpm: 6000 + (k % 1000),
          oilPressureBar: k === 200_000 ? 0.7 : 4 + (k % 10) / 10,
          oilTempC: 100 + (k % 20) / 10,
          waterTempC: 85,
          speedKmh: k === 300_001 ? 287 : 150,
        }
      }
    })()
    const s = analyzeTrace(cfg, samples)
    const ch = s.channels
    expect(ch.t0.length).toBeLessThanOrEqual(OVERVIEW_MAX_POINTS)
    expect(ch.t0.length).toBeGreaterThan(OVERVIEW_MAX_POINTS / 2)
    expect(ch.t0[0]).toBe(0)
    expect(ch.t1[ch.t1.length - 1]).toBe(3599.99)
    // buckets tile the trace: each starts one sample (0.01 s) after the previous one ends
    for (let i = 1; i < ch.t0.length; i++) expect(Math.round((ch.t0[i]! - ch.t1[i - 1]!) * 1000)).toBe(10)
    const pMin = ch.channels.oilPressureBar!.min as number[]
    expect(Math.min(...pMin)).toBe(0.7)
    const dip = pMin.indexOf(0.7)
    expect(ch.t0[dip]!).toBeLessThanOrEqual(2000)
    expect(ch.t1[dip]!).toBeGreaterThanOrEqual(2000)
    expect(Math.max(...(ch.channels.speedKmh!.max as number[]))).toBe(287)
    expect(Math.min(...(ch.channels.rpm!.min as number[]))).toBe(6000)
    expect(Math.max(...(ch.channels.rpm!.max as number[]))).toBe(6999)
    expect(ch.channels.waterTempC).toEqual({ min: Array(ch.t0.length).fill(85), max: Array(ch.t0.length).fill(85) })
    // downsampled for the browser, the dip and the peak are still there
    const d = downsampleOverview(ch, 150)
    expect(d.t0.length).toBeLessThanOrEqual(150)
    expect(Math.min(...(d.channels.oilPressureBar!.min as number[]))).toBe(0.7)
    expect(Math.max(...(d.channels.speedKmh!.max as number[]))).toBe(287)
  })
})
