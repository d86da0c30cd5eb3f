/**
 * Validation of an oil sample entered by form or read from a lab CSV row.
 * Every error names its field, in the issue path and in the message.
 */
import { z } from 'zod'
import { line } from '../../text'
import { OIL_ELEMENTS, type OilSampleValues } from './limits'
import { parseGrade } from './viscosity'

/** Above this a ppm figure is a typing or unit error, not a measurement (10 % by mass). */
export const MAX_PPM = 100_000
export const MAX_KV40 = 5_000
export const MAX_KV100 = 1_000
/** HTHS of engine oils lies around 1.5 to 6 mPa s; far above is a unit slip (cP and mPa s are the same, Pa s is not). */
export const MAX_HTHS = 100
export const MAX_HOURS = 100_000
export const MAX_PARTICLES_PER_ML = 10_000_000

/** '' and whitespace become null; numeric strings become numbers; anything else passes through for the type check. */
function toNumberOrNull(v: unknown): unknown {
  if (v === undefined || v === null) return null
  if (typeof v === 'string') {
    const t = v.trim()
    if (t === '') return null
    const n = Number(t)
    return Number.isNaN(n) ? v : n
  }
  return v
}

function numberField(label: string, min: number, max: number, unit: string, opts: { exclusiveMin?: boolean } = {}) {
  const unitText = unit ? ` ${unit}` : ''
  let base = z.number({ error: `${label} must be a number` }).refine(Number.isFinite, { error: `${label} must be a finite number` })
  base = opts.exclusiveMin
    ? base.refine((x) => x > min, { error: `${label} must be greater than ${min}${unitText}` })
    : base.refine((x) => x >= min, { error: `${label} cannot be below ${min}${unitText}` })
  base = base.refine((x) => x <= max, { error: `${label} must be at most ${max}${unitText}` })
  return z.preprocess(toNumberOrNull, base.nullable())
}

function ppmField(element: string) {
  return z.preprocess(
    toNumberOrNull,
    z.number({ error: `${element} must be a number of ppm` })
      .refine(Number.isFinite, { error: `${element} must be a finite number of ppm` })
      .refine((x) => x >= 0, { error: `${element} cannot be negative` })
      .refine((x) => x <= MAX_PPM, { error: `${element} must be at most ${MAX_PPM} ppm` })
      .nullable(),
  )
}

function toBoolean(v: unknown): unknown {
  if (typeof v === 'string') {
    const t = v.trim().toLowerCase()
    if (t === '') return undefined
    if (['true', 'yes', 'y', '1'].includes(t)) return true
    if (['false', 'no', 'n', '0'].includes(t)) return false
  }
  return v ?? undefined
}

const elementShape = Object.fromEntries(OIL_ELEMENTS.map((e) => [e, ppmField(e).optional()])) as Record<(typeof OIL_ELEMENTS)[number], z.ZodOptional<ReturnType<typeof ppmField>>>

/** Gathers flat element columns (a lab CSV row: Fe, Cu, ...) into `elements`; drops blank readings. */
function normaliseInput(input: unknown): unknown {
  if (typeof input !== 'object' || input === null || Array.isArray(input)) return input
  const row = input as Record<string, unknown>
  let elements: unknown = row.elements
  if (elements === undefined) {
    const gathered: Record<string, unknown> = {}
    for (const e of OIL_ELEMENTS) if (e in row) gathered[e] = row[e]
    elements = gathered
  }
  if (typeof elements === 'object' && elements !== null && !Array.isArray(elements)) {
    const kept: Record<string, unknown> = {}
    for (const [k, v] of Object.entries(elements)) {
      if (v === null || v === undefined || (typeof v === 'string' && v.trim() === '')) continue
      kept[k] = v
    }
    elements = kept
  }
  const counted = row.countedParticles
  return { ...row, elements, countedParticles: counted === null || counted === '' ? undefined : counted }
}

const countField = (label: string) =>
  z.preprocess(toNumberOrNull, z.number({ error: `${label} must be a number` }).int({ error: `${label} must be a whole number` }).min(0, { error: `${label} cannot be negative` }).nullable())

/**
 * Schema for one sample. `now` and the engine's build date come in from the
 * caller (the domain never reads the clock); a sample cannot be taken in the
 * future or before the engine was built.
 */
export function oilSampleSchema(ctx: { now: Date; builtAt: Date | null }): z.ZodType<OilSampleValues, unknown> {
  const nowMs = ctx.now.getTime()
  const builtMs = ctx.builtAt ? ctx.builtAt.getTime() : null

  const shape = z.object({
    sampleId: line({ error: 'sampleId is required' }).trim().min(1, { error: 'sampleId is required' }).max(64, { error: 'sampleId must be at most 64 characters' }),
    sampledAt: line({ error: 'sampledAt must be a date' })
      .trim()
      .refine((s) => !Number.isNaN(Date.parse(s)), { error: 'sampledAt must be a date such as 2025-06-01' })
      .refine((s) => Number.isNaN(Date.parse(s)) || Date.parse(s) <= nowMs, { error: 'sampledAt cannot be in the future' })
      .refine((s) => builtMs === null || Number.isNaN(Date.parse(s)) || Date.parse(s) >= builtMs, { error: 'sampledAt cannot be before the engine was built' }),
    engineHours: numberField('engineHours', 0, MAX_HOURS, 'h'),
    oilHours: numberField('oilHours', 0, MAX_HOURS, 'h'),
    elements: z.object(elementShape, { error: 'elements must be a set of ppm readings' }),
    kv40: numberField('kv40', 0, MAX_KV40, 'mm²/s', { exclusiveMin: true }),
    kv100: numberField('kv100', 0, MAX_KV100, 'mm²/s', { exclusiveMin: true }),
    hths: numberField('hths', 0, MAX_HTHS, 'mPa·s', { exclusiveMin: true }),
    fuelDilutionPct: numberField('fuelDilutionPct', 0, 100, '%'),
    waterPct: numberField('waterPct', 0, 100, '%'),
    p4: numberField('p4', 0, MAX_PARTICLES_PER_ML, 'particles/mL'),
    p6: numberField('p6', 0, MAX_PARTICLES_PER_ML, 'particles/mL'),
    p14: numberField('p14', 0, MAX_PARTICLES_PER_ML, 'particles/mL'),
    grade: z.preprocess(
      (v) => (v === undefined || v === null || (typeof v === 'string' && v.trim() === '') ? null : v),
      line({ error: 'grade must be text such as 5W-40' })
        .trim()
        .refine((g) => parseGrade(g) !== null, { error: 'grade must be an SAE J300 grade such as 5W-40 or 40' })
        .nullable(),
    ),
    oilChanged: z.preprocess(toBoolean, z.boolean({ error: 'oilChanged must be yes or no' }).optional()),
    countedParticles: z
      .object({ p4: countField('countedParticles.p4').optional(), p6: countField('countedParticles.p6').optional(), p14: countField('countedParticles.p14').optional() })
      .optional(),
  })

  const checked = shape.superRefine((s, issue) => {
    if (s.kv40 !== null && s.kv100 !== null && s.kv100 >= s.kv40) {
      issue.addIssue({ code: 'custom', path: ['kv100'], message: `kv100 (${s.kv100}) must be lower than kv40 (${s.kv40}): oil thins as it warms` })
    }
    if (s.engineHours !== null && s.oilHours !== null && s.oilHours > s.engineHours) {
      issue.addIssue({ code: 'custom', path: ['oilHours'], message: `oilHours (${s.oilHours}) cannot exceed engineHours (${s.engineHours})` })
    }
    // Counts are cumulative (>= size), so a larger size cannot have more particles.
    if (s.p4 !== null && s.p6 !== null && s.p6 > s.p4) {
      issue.addIssue({ code: 'custom', path: ['p6'], message: `p6 (${s.p6}) cannot exceed p4 (${s.p4}): counts are cumulative` })
    }
    if (s.p6 !== null && s.p14 !== null && s.p14 > s.p6) {
      issue.addIssue({ code: 'custom', path: ['p14'], message: `p14 (${s.p14}) cannot exceed p6 (${s.p6}): counts are cumulative` })
    }
  })

  return z.preprocess(normaliseInput, checked).transform((s): OilSampleValues => {
    const elements: OilSampleValues['elements'] = {}
    for (const e of OIL_ELEMENTS) {
      const v = s.elements[e]
      if (typeof v === 'number') elements[e] = v
    }
    const out: OilSampleValues = {
      sampleId: s.sampleId,
      sampledAt: s.sampledAt,
      engineHours: s.engineHours,
      oilHours: s.oilHours,
      elements,
      kv40: s.kv40,
      kv100: s.kv100,
      hths: s.hths,
      fuelDilutionPct: s.fuelDilutionPct,
      waterPct: s.waterPct,
      p4: s.p4,
      p6: s.p6,
      p14: s.p14,
      grade: s.grade,
    }
    if (s.oilChanged !== undefined) out.oilChanged = s.oilChanged
    if (s.countedParticles) {
      const c: NonNullable<OilSampleValues['countedParticles']> = {}
      if (typeof s.countedParticles.p4 === 'number') c.p4 = s.countedParticles.p4
      if (typeof s.countedParticles.p6 === 'number') c.p6 = s.countedParticles.p6
      if (typeof s.countedParticles.p14 === 'number') c.p14 = s.countedParticles.p14
      out.countedParticles = c
    }
    return out
  })
}
