/**
 * ISO 4406:1999 solid-contamination code for fluids.
 *
 * Codes are read from the standard's table, not from a doubling formula: the
 * table's bounds are rounded (1.3, 2.5, 1300, 2500 ...), so a formula gives a
 * different code near them (10.1 /mL is 11; 1305 /mL is 18).
 */

/**
 * Upper bound (particles per mL, inclusive) of each scale number, index = code.
 * Code n covers (upper[n-1], upper[n]]; code 0 covers 0 up to 0.01.
 * Source: ISO 4406:1999 table 1, as reproduced.
 */
export const ISO4406_UPPER_BOUNDS: readonly number[] = Object.freeze([
  0.01, 0.02, 0.04, 0.08, 0.16, 0.32, 0.64, 1.3, 2.5, 5,
  10, 20, 40, 80, 160, 320, 640, 1300, 2500, 5000,
  10000, 20000, 40000, 80000, 160000, 320000, 640000, 1300000, 2500000,
])

/** Highest code in the table. Counts above its upper bound report as ISO4406_ABOVE_TABLE. */
export const ISO4406_MAX_CODE = ISO4406_UPPER_BOUNDS.length - 1

/** Returned for more than 2,500,000 particles per mL; written '>28' in a code string. */
export const ISO4406_ABOVE_TABLE = ISO4406_MAX_CODE + 1

/** ISO 4406 rule: a scale number from fewer than this many counted particles is marked '>='. */
export const ISO4406_MIN_COUNTED = 20

/** Scale number for a count of particles per mL (lower < x <= upper). */
export function iso4406Code(particlesPerMl: number): number {
  if (!Number.isFinite(particlesPerMl)) throw new RangeError(`particle count must be a finite number, got ${particlesPerMl}`)
  if (particlesPerMl < 0) throw new RangeError(`particle count cannot be negative, got ${particlesPerMl}`)
  for (let code = 0; code <= ISO4406_MAX_CODE; code++) {
    if (particlesPerMl <= ISO4406_UPPER_BOUNDS[code]!) return code
  }
  return ISO4406_ABOVE_TABLE
}

/** Converts a raw count over a sample volume to particles per mL. */
export function particlesPerMl(count: number, volumeMl: number): number {
  if (!(volumeMl > 0)) throw new RangeError(`sample volume must be positive, got ${volumeMl}`)
  return count / volumeMl
}

export interface Iso4406Counts {
  /** cumulative particles per mL at >= 4 um(c) */
  p4: number | null
  /** cumulative particles per mL at >= 6 um(c) */
  p6: number | null
  /** cumulative particles per mL at >= 14 um(c) */
  p14: number | null
}

export interface Iso4406Options {
  /** particles actually counted in each channel; below 20 the scale number gets a '>=' prefix */
  countedParticles?: { p4?: number; p6?: number; p14?: number }
}

function scaleNumber(perMl: number | null, counted: number | undefined): string {
  if (perMl === null || perMl === undefined || Number.isNaN(perMl)) return '-'
  const code = iso4406Code(perMl)
  const text = code === ISO4406_ABOVE_TABLE ? `>${ISO4406_MAX_CODE}` : String(code)
  if (counted !== undefined && counted < ISO4406_MIN_COUNTED && code !== ISO4406_ABOVE_TABLE) return `>=${text}`
  return text
}

/** Three-part code such as '19/16/10'; '-' for a channel not measured; null when nothing was measured. */
export function iso4406(counts: Iso4406Counts, opts?: Iso4406Options): string | null {
  if (counts.p4 === null && counts.p6 === null && counts.p14 === null) return null
  const counted = opts?.countedParticles ?? {}
  return [
    scaleNumber(counts.p4, counted.p4),
    scaleNumber(counts.p6, counted.p6),
    scaleNumber(counts.p14, counted.p14),
  ].join('/')
}
