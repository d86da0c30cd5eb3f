// High-cycle fatigue: Basquin's S-N line and Palmgren-Miner linear damage, as in Shigley's
// fatigue chapter (Budynas and Nisbett, Shigley's Mechanical Engineering Design, ch. 6).
// Pure: no clock, no I/O. Design aids, never a substitute for the supplier's service instructions.

/** Where Shigley fits the line: from f Sut at 10^3 cycles down to Se at 10^6 cycles. */
export const SN_LOW_CYCLES = 1e3
export const SN_KNEE_CYCLES = 1e6

/** What every screen and report prints in place of a figure the line cannot give. */
export const SN_BELOW_RANGE_TEXT = 'outside the S-N line\'s range (below 10³ cycles)'

/**
 * An answer read off the S-N line. Below 10^3 cycles the part is in low-cycle fatigue, where the
 * line was never fitted: extrapolating it gives a number that looks exact and means nothing, so
 * the answer says so instead, and the type makes every caller handle that case.
 */
export type SnAnswer =
  | { valid: true; value: number }
  | { valid: false; reason: 'below-line-range'; message: string }

const belowRange: SnAnswer = { valid: false, reason: 'below-line-range', message: SN_BELOW_RANGE_TEXT }

export interface BasquinLine {
  /** Sf = a N^b, in the units of Sut and Se */
  a: number
  b: number
  /** Cycles to failure at a fully reversed stress amplitude s (Infinity below Se with the cut-off). */
  cyclesAtStress(s: number): SnAnswer
  /** Fatigue strength at N cycles (Se from 10^6 cycles on with the cut-off). */
  stressAtCycles(n: number): SnAnswer
}

/**
 * Basquin S-N line Sf = a N^b through (10^3, f Sut) and (10^6, Se), as in Shigley's fatigue chapter.
 * By default a stress below the endurance limit gives infinite life and the strength from 10^6
 * cycles on is Se (Shigley's cut-off, the knee of the S-N diagram of steels); `enduranceCutoff: false`
 * extends the line beyond 10^6 instead. Below 10^3 cycles neither direction gives a number.
 */
export function basquin(sut: number, se: number, f: number, opts: { enduranceCutoff?: boolean } = {}): BasquinLine {
  if (!(sut > 0 && se > 0 && f > 0)) throw new RangeError('Sut, Se and f must be positive')
  // With f Sut at or below Se the line would be flat or rising: no S-N line at all.
  if (!(f * sut > se)) throw new RangeError('f Sut must be above Se')
  const cutoff = opts.enduranceCutoff ?? true
  const lowCycleStress = f * sut
  const a = lowCycleStress ** 2 / se
  const b = -Math.log10(lowCycleStress / se) / 3
  return {
    a,
    b,
    cyclesAtStress(s: number): SnAnswer {
      if (!(s >= 0)) throw new RangeError('stress amplitude must be zero or above')
      // Compared in stress, not in cycles, so the line's own end point (f Sut) stays inside.
      if (s > lowCycleStress) return belowRange
      if (cutoff && s < se) return { valid: true, value: Infinity }
      return { valid: true, value: Math.pow(s / a, 1 / b) }
    },
    stressAtCycles(n: number): SnAnswer {
      if (!(n >= 0)) throw new RangeError('cycles must be zero or above')
      if (n < SN_LOW_CYCLES) return belowRange
      if (cutoff && n >= SN_KNEE_CYCLES) return { valid: true, value: se }
      return { valid: true, value: a * Math.pow(n, b) }
    },
  }
}

/** An S-N answer as text: the formatted figure, or the sentence saying the line does not reach. */
export function snAnswerText(answer: SnAnswer, format: (value: number) => string): string {
  if (!answer.valid) return answer.message
  return format(answer.value)
}

/** Palmgren-Miner linear damage sum; infinite cycles to failure adds nothing. */
export function minerSum(blocks: { cycles: number; cyclesToFailure: number }[]): number {
  let d = 0
  for (const b of blocks) {
    if (b.cycles === 0 || b.cyclesToFailure === Infinity) continue
    d += b.cycles / b.cyclesToFailure
  }
  return d
}
