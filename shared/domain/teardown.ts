/**
 * Teardown: judging measurements against tolerance, wear rate across
 * teardowns and hours left until a characteristic reaches its limit.
 *
 * A measurement in tolerance and a positive "hours left" are an aid to the
 * supplier's service instructions, inspection and licensed practice, never a
 * release to run on their own. A straight-line wear fit says nothing about
 * cracks, scoring or sudden failure.
 */
import { z } from 'zod'
import { line } from '../text'

export const TEARDOWN_NOTICE =
  'Measurements and wear projections support, and never replace, the engine supplier\'s service instructions, inspection and licensed practice.'

export const CHARACTERISTIC_UNITS = ['mm', 'um', 'N', 'N*m', 'deg', '%', 'bar', 'kg', 'g'] as const
export type CharacteristicUnit = typeof CHARACTERISTIC_UNITS[number]

export interface Characteristic {
  key: string
  label: string
  unit: CharacteristicUnit
  nominal: number
  /** lowest value in tolerance (included) */
  min: number
  /** highest value in tolerance (included) */
  max: number
  plausibleMin?: number
  plausibleMax?: number
}

export type ToleranceVerdict = 'in' | 'low' | 'high' | 'implausible'

/** Default plausible range = nominal +- this many tolerance band widths. */
export const PLAUSIBLE_BAND_FACTOR = 10

const LENGTH_UNITS: readonly CharacteristicUnit[] = ['mm', 'um']

export const characteristicSchema = z
  .object({
    key: line().trim().min(1, { error: 'key is required' }),
    label: line().trim().min(1, { error: 'label is required' }),
    unit: z.enum(CHARACTERISTIC_UNITS, { error: 'unit must be one of mm, um, N, N*m, deg, %, bar, kg, g' }),
    nominal: z.number({ error: 'nominal must be a number' }),
    min: z.number({ error: 'min must be a number' }),
    max: z.number({ error: 'max must be a number' }),
    plausibleMin: z.number({ error: 'plausibleMin must be a number' }).optional(),
    plausibleMax: z.number({ error: 'plausibleMax must be a number' }).optional(),
  })
  .superRefine((c, issue) => {
    if (!(c.min < c.max)) issue.addIssue({ code: 'custom', path: ['max'], message: `max (${c.max}) must be greater than min (${c.min})` })
    if (c.nominal < c.min || c.nominal > c.max) issue.addIssue({ code: 'custom', path: ['nominal'], message: `nominal (${c.nominal}) must lie between min and max` })
    if (c.plausibleMin !== undefined && c.plausibleMin > c.min) issue.addIssue({ code: 'custom', path: ['plausibleMin'], message: 'plausibleMin cannot be above min' })
    if (c.plausibleMax !== undefined && c.plausibleMax < c.max) issue.addIssue({ code: 'custom', path: ['plausibleMax'], message: 'plausibleMax cannot be below max' })
  })

/** The range outside which a reading is taken as a typing or instrument error. */
export function plausibleRange(c: Characteristic): { min: number; max: number } {
  const width = c.max - c.min
  let min = c.plausibleMin ?? c.nominal - PLAUSIBLE_BAND_FACTOR * width
  const max = c.plausibleMax ?? c.nominal + PLAUSIBLE_BAND_FACTOR * width
  // A length (clearance, diameter, gap) cannot be negative.
  if (LENGTH_UNITS.includes(c.unit) && min < 0) min = 0
  return { min, max }
}

/** Judges one reading. min and max are both IN tolerance. */
export function judge(value: number, c: Characteristic): { verdict: ToleranceVerdict; deviation: number; bandPosition: number } {
  const width = c.max - c.min
  if (!(width > 0)) throw new RangeError(`characteristic ${c.key}: max (${c.max}) must be greater than min (${c.min})`)
  if (!Number.isFinite(value)) return { verdict: 'implausible', deviation: NaN, bandPosition: NaN }
  const deviation = value - c.nominal
  const bandPosition = (value - c.min) / width
  const plausible = plausibleRange(c)
  let verdict: ToleranceVerdict
  if (value < plausible.min || value > plausible.max) verdict = 'implausible'
  else if (value < c.min) verdict = 'low'
  else if (value > c.max) verdict = 'high'
  else verdict = 'in'
  return { verdict, deviation, bandPosition }
}

/** Least-squares line value = intercept + slopePerHour * hours; null with fewer than 2 points or no spread in hours. */
export function wearTrend(points: { hours: number; value: number }[]): { slopePerHour: number; intercept: number; n: number } | null {
  const pts = points.filter((p) => Number.isFinite(p.hours) && Number.isFinite(p.value))
  const n = pts.length
  if (n < 2) return null
  let sx = 0
  let sy = 0
  for (const p of pts) {
    sx += p.hours
    sy += p.value
  }
  const mx = sx / n
  const my = sy / n
  let sxx = 0
  let sxy = 0
  // Centred sums: steadier than the raw normal equations when hours are large.
  for (const p of pts) {
    sxx += (p.hours - mx) ** 2
    sxy += (p.hours - mx) * (p.value - my)
  }
  if (sxx === 0) return null
  const slopePerHour = sxy / sxx
  return { slopePerHour, intercept: my - slopePerHour * mx, n }
}

/**
 * Hours from currentHours until the fitted line reaches min (falling) or max
 * (rising); 0 when it is already there or past; null when the line is flat.
 */
export function hoursToLimit(trend: { slopePerHour: number; intercept: number }, currentHours: number, c: Characteristic): number | null {
  const { slopePerHour, intercept } = trend
  if (slopePerHour === 0 || !Number.isFinite(slopePerHour)) return null
  const limit = slopePerHour < 0 ? c.min : c.max
  const hoursAtLimit = (limit - intercept) / slopePerHour
  return Math.max(0, hoursAtLimit - currentHours)
}

export const TEARDOWN_CONDITIONS: readonly string[] = Object.freeze([
  'as new',
  'normal wear',
  'worn to limit',
  'scored',
  'pitted',
  'cracked',
  'seized',
  'fretted',
  'discoloured (heat)',
  'bent',
])

export const DISPOSITIONS = Object.freeze(['refit', 'replace', 'scrap', 'quarantine', 'send-to-lab'] as const) as readonly ['refit', 'replace', 'scrap', 'quarantine', 'send-to-lab']
export type Disposition = typeof DISPOSITIONS[number]
