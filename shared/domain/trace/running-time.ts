// Running time by rpm band, and the steps that count nowhere (gaps).

import type { TraceGap } from './types'

export const MAX_LISTED_GAPS = 1000

/**
 * Histogram by segments of consecutive steps in one band: one subtraction per segment
 * keeps sums exact for decimal timestamps (no drift from adding 0.01 a million times).
 */
export class BandHistogram {
  readonly seconds: number[] = []
  runningSeconds = 0

  /** A segment in `band` (-1: not running) from startT until untilT. */
  addSegment(band: number, startT: number, untilT: number): void {
    const dt = untilT - startT
    // a zero-length segment (the last sample's band) must not lengthen the histogram
    if (band >= 0 && dt > 0) {
      const h = this.seconds
      while (h.length <= band) h.push(0)
      h[band]! += dt
      this.runningSeconds += dt
    }
  }
}

/** Steps longer than maxGapS: all counted, the first MAX_LISTED_GAPS listed. */
export class GapLog {
  readonly listed: TraceGap[] = []
  count = 0
  seconds = 0

  record(atT: number, seconds: number, firstT: number): void {
    this.count++
    this.seconds += seconds
    if (this.listed.length < MAX_LISTED_GAPS) this.listed.push({ atS: atT - firstT, seconds })
  }
}
