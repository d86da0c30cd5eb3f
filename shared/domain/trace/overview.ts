// The overview: at most OVERVIEW_MAX_POINTS buckets of consecutive samples. Each bucket keeps its
// first and last time, the highest rpm with its time (the rpm line drawn before channels were
// kept), and the lowest and highest value of every channel, so that a one-sample peak or dip
// survives however long the trace. Buckets hold `bucketSize` samples; when the list is full,
// pairs merge and the size doubles, so memory stays constant.

export const OVERVIEW_MAX_POINTS = 600

/** The channels the session page charts over time, in their stored units. */
export const OVERVIEW_CHANNELS = ['rpm', 'oilTempC', 'oilPressureBar', 'waterTempC', 'speedKmh'] as const
export type OverviewChannel = (typeof OVERVIEW_CHANNELS)[number]

export interface ChannelRange {
  /** per bucket; null where the bucket held no value of the channel */
  min: (number | null)[]
  max: (number | null)[]
}

/**
 * Bucket i covers t0[i]..t1[i] (seconds from the first sample). A channel the trace never
 * carried is null.
 */
export interface TraceOverview {
  t0: number[]
  t1: number[]
  channels: Record<OverviewChannel, ChannelRange | null>
}

const N_CH = OVERVIEW_CHANNELS.length

/** NaN-aware min and max: NaN means "no value" and loses to any number. */
const lo = (x: number, y: number) => (y < x || x !== x ? y : x)
const hi = (x: number, y: number) => (y > x || x !== x ? y : x)

export class OverviewBuckets {
  private readonly t0: number[] = []
  private readonly t1: number[] = []
  private readonly peakT: number[] = []
  private readonly peakRpm: number[] = []
  /** per channel, per bucket; NaN where the bucket held no value */
  private readonly mins: number[][] = OVERVIEW_CHANNELS.map(() => [])
  private readonly maxs: number[][] = OVERVIEW_CHANNELS.map(() => [])
  bucketSize = 1

  // the bucket being filled
  private count = 0
  private openT0 = NaN
  private openT1 = NaN
  private openPeakT = NaN
  private openPeakRpm = -1
  private readonly openMin = new Float64Array(N_CH).fill(NaN)
  private readonly openMax = new Float64Array(N_CH).fill(NaN)

  /** One sample, NaN for an absent channel (rpm is always there). */
  sample(t: number, rpm: number, oilTemp: number, oilPressure: number, waterTemp: number, speed: number): void {
    if (this.count === 0) this.openT0 = t
    this.openT1 = t
    if (rpm > this.openPeakRpm) {
      this.openPeakRpm = rpm
      this.openPeakT = t
    }
    const mn = this.openMin
    const mx = this.openMax
    mn[0] = lo(mn[0]!, rpm)
    mx[0] = hi(mx[0]!, rpm)
    mn[1] = lo(mn[1]!, oilTemp)
    mx[1] = hi(mx[1]!, oilTemp)
    mn[2] = lo(mn[2]!, oilPressure)
    mx[2] = hi(mx[2]!, oilPressure)
    mn[3] = lo(mn[3]!, waterTemp)
    mx[3] = hi(mx[3]!, waterTemp)
    mn[4] = lo(mn[4]!, speed)
    mx[4] = hi(mx[4]!, speed)
    if (++this.count >= this.bucketSize) {
      this.close()
      if (this.t0.length >= OVERVIEW_MAX_POINTS) this.mergePairs()
    }
  }

  /** The last, partly filled bucket at the end of the trace: kept without merging. */
  finish(): void {
    if (this.count > 0) this.close()
  }

  private close(): void {
    this.t0.push(this.openT0)
    this.t1.push(this.openT1)
    this.peakT.push(this.openPeakT)
    this.peakRpm.push(this.openPeakRpm)
    for (let c = 0; c < N_CH; c++) {
      this.mins[c]!.push(this.openMin[c]!)
      this.maxs[c]!.push(this.openMax[c]!)
    }
    this.count = 0
    this.openPeakRpm = -1
    this.openMin.fill(NaN)
    this.openMax.fill(NaN)
  }

  private mergePairs(): void {
    const half = this.t0.length >> 1
    for (let i = 0; i < half; i++) {
      const a = 2 * i
      const b = a + 1
      this.t0[i] = this.t0[a]!
      this.t1[i] = this.t1[b]!
      // ties keep the earlier sample
      const k = this.peakRpm[b]! > this.peakRpm[a]! ? b : a
      this.peakT[i] = this.peakT[k]!
      this.peakRpm[i] = this.peakRpm[k]!
      for (let c = 0; c < N_CH; c++) {
        const mn = this.mins[c]!
        const mx = this.maxs[c]!
        mn[i] = lo(mn[a]!, mn[b]!)
        mx[i] = hi(mx[a]!, mx[b]!)
      }
    }
    for (const arr of [this.t0, this.t1, this.peakT, this.peakRpm, ...this.mins, ...this.maxs]) arr.length = half
    this.bucketSize *= 2
  }

  /** The highest rpm of each bucket at its time. */
  points(firstT: number): { t: number; rpm: number }[] {
    return this.peakT.map((t, i) => ({ t: t - firstT, rpm: this.peakRpm[i]! }))
  }

  /** Every channel's range per bucket, times from the first sample (to the millisecond). */
  ranges(firstT: number): TraceOverview {
    const ms = (t: number) => Math.round((t - firstT) * 1000) / 1000
    const channels = {} as TraceOverview['channels']
    OVERVIEW_CHANNELS.forEach((name, c) => {
      const mn = this.mins[c]!
      const mx = this.maxs[c]!
      const any = mx.some((v) => v === v)
      channels[name] = any ? { min: mn.map((v) => (v === v ? v : null)), max: mx.map((v) => (v === v ? v : null)) } : null
    })
    return { t0: this.t0.map(ms), t1: this.t1.map(ms), channels }
  }
}
