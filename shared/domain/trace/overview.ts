// The overview: at most OVERVIEW_MAX_POINTS points, each the highest rpm of its bucket so
// peaks show. Buckets hold `bucketSize` samples; when the list is full, pairs merge and the
// size doubles, so memory stays constant however long the trace.

export const OVERVIEW_MAX_POINTS = 600

export class OverviewBuckets {
  private readonly ovT: number[] = []
  private readonly ovRpm: number[] = []
  bucketSize = 1

  /** Closes a full bucket; returns the bucket size from now on (doubled when pairs merged). */
  add(t: number, rpm: number): number {
    const ovT = this.ovT
    const ovRpm = this.ovRpm
    ovT.push(t)
    ovRpm.push(rpm)
    if (ovT.length >= OVERVIEW_MAX_POINTS) {
      const half = ovT.length >> 1
      for (let i = 0; i < half; i++) {
        const a = 2 * i
        const k = ovRpm[a + 1]! > ovRpm[a]! ? a + 1 : a
        ovT[i] = ovT[k]!
        ovRpm[i] = ovRpm[k]!
      }
      ovT.length = half
      ovRpm.length = half
      this.bucketSize *= 2
    }
    return this.bucketSize
  }

  /** The last, partly filled bucket at the end of the trace: kept without merging. */
  addLast(t: number, rpm: number): void {
    this.ovT.push(t)
    this.ovRpm.push(rpm)
  }

  points(firstT: number): { t: number; rpm: number }[] {
    return this.ovT.map((t, i) => ({ t: t - firstT, rpm: this.ovRpm[i]! }))
  }
}
