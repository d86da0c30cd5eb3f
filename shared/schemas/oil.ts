// Request bodies of the oil API, shared by the forms and the routes.
import { z } from 'zod'
import { line, multiline } from '../text'
import { OIL_ELEMENTS } from '#shared/domain/oil/limits'
import { OIL_CSV_FIELDS, PARTICLE_BASES } from '#shared/domain/oil/lab-csv'
import { parseGrade } from '#shared/domain/oil/viscosity'

const limitValue = (label: string) => z.number({ error: `${label} must be a number` }).min(0, { error: `${label} cannot be negative` }).max(100_000, { error: `${label} must be at most 100000` }).nullable()

const ElementLimitSchema = z.object({
  caution: limitValue('caution'),
  critical: limitValue('critical'),
  ratePer10hCaution: limitValue('ratePer10hCaution'),
  ratePer10hCritical: limitValue('ratePer10hCritical'),
}).refine((l) => l.caution === null || l.critical === null || l.critical >= l.caution, { error: 'critical must not be below caution', path: ['critical'] })
  .refine((l) => l.ratePer10hCaution === null || l.ratePer10hCritical === null || l.ratePer10hCritical >= l.ratePer10hCaution, { error: 'ratePer10hCritical must not be below ratePer10hCaution', path: ['ratePer10hCritical'] })

const elementsShape = Object.fromEntries(OIL_ELEMENTS.map((e) => [e, ElementLimitSchema.optional()])) as Record<(typeof OIL_ELEMENTS)[number], z.ZodOptional<typeof ElementLimitSchema>>

const refValue = (label: string, unit: string, max: number) =>
  z.number({ error: `${label} must be a number of ${unit}` }).positive({ error: `${label} must be positive` }).max(max, { error: `${label} must be at most ${max} ${unit}` }).nullable()

/** The new oil of an engine type as measured; every figure may be left empty. */
export const NewOilReferenceSchema = z.object({
  grade: line({ error: 'grade must be text such as 5W-40' }).trim().max(20)
    .refine((g) => g === '' || parseGrade(g) !== null, { error: 'grade must be an SAE J300 grade such as 5W-40 or 40' })
    .transform((g) => (g === '' ? null : g))
    .nullable(),
  kv40: refValue('kv40', 'mm²/s', 5000),
  kv100: refValue('kv100', 'mm²/s', 1000),
  tbn: refValue('tbn', 'mg KOH/g', 100),
}).refine((r) => r.kv40 === null || r.kv100 === null || r.kv100 < r.kv40, { error: 'kv100 must be lower than kv40: oil thins as it warms', path: ['kv100'] })

export const OilLimitsSchema = z.object({
  elements: z.strictObject(elementsShape, { error: 'elements must be limits per element symbol' }),
  fuelDilutionCautionPct: z.number().min(0).max(100, { error: 'fuelDilutionCautionPct must be at most 100' }).nullable(),
  waterCautionPct: z.number().min(0).max(100, { error: 'waterCautionPct must be at most 100' }).nullable(),
  kv40ChangeCautionPct: z.number().min(0).max(100, { error: 'kv40ChangeCautionPct must be at most 100' }).nullable(),
  kv100ChangeCautionPct: z.number().min(0).max(100, { error: 'kv100ChangeCautionPct must be at most 100' }).nullable(),
  newOil: NewOilReferenceSchema.nullable(),
  statistical: z.object({
    enabled: z.boolean(),
    minSamples: z.number().int().min(3, { error: 'minSamples must be at least 3' }).max(10_000),
    method: z.enum(['sigma', 'percentile']),
    cautionSigma: z.number().positive().max(10),
    criticalSigma: z.number().positive().max(10),
    cautionPercentile: z.number().gt(0).lt(100),
    criticalPercentile: z.number().gt(0).lt(100),
  }).refine((s) => s.criticalSigma >= s.cautionSigma, { error: 'criticalSigma must not be below cautionSigma', path: ['criticalSigma'] })
    .refine((s) => s.criticalPercentile >= s.cautionPercentile, { error: 'criticalPercentile must not be below cautionPercentile', path: ['criticalPercentile'] }),
})

/** Form entry: the engine and lab, then the sample fields checked by oilSampleSchema on the server. */
export const OilSampleCreateSchema = z.looseObject({
  engineId: z.coerce.number({ error: 'engineId must be an engine' }).int().positive({ error: 'engineId must be an engine' }),
  lab: line().trim().max(120, { error: 'lab must be at most 120 characters' }).nullable().optional(),
})

/** Correction of a recorded sample: the lab, then the sample fields checked by oilSampleSchema on the server. */
export const OilSampleUpdateSchema = z.looseObject({
  lab: line().trim().max(120, { error: 'lab must be at most 120 characters' }).nullable().optional(),
  // The sample's version the client started from; another one stored answers 409 with the current sample.
  baseVersion: z.number({ error: 'baseVersion must be a whole number' }).int({ error: 'baseVersion must be a whole number' }).min(1, { error: 'baseVersion must be at least 1' }).optional(),
})

export const OilCsvMappingSchema = z.record(line().max(200), z.enum([...OIL_CSV_FIELDS, 'ignore']))

export const OilImportSchema = z.object({
  lab: line({ error: 'lab is required' }).trim().min(1, { error: 'lab is required' }).max(120, { error: 'lab must be at most 120 characters' }),
  csv: multiline({ error: 'csv must be the text of the file' }).min(1, { error: 'csv is empty' }).max(5_000_000, { error: 'csv must be at most 5 MB' }),
  mapping: OilCsvMappingSchema,
  /** volume the file's particle counts refer to; per mL when not given */
  particleBasis: z.enum(PARTICLE_BASES, { error: 'particleBasis must be per_ml or per_100ml' }).optional(),
  saveMapping: z.boolean().optional(),
})

export const OilMappingSaveSchema = z.object({
  lab: line().trim().min(1, { error: 'lab is required' }).max(120),
  headers: z.array(line().max(200)).min(1, { error: 'headers are required' }).max(200),
  mapping: OilCsvMappingSchema,
  particleBasis: z.enum(PARTICLE_BASES, { error: 'particleBasis must be per_ml or per_100ml' }).optional(),
})
