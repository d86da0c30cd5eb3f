// Schemas shared by the forms and the API for the fleet model.
import { z } from 'zod'
import { line } from '../text'

const positive = (what: string) => z.number({ error: `${what} must be a number` }).positive(`${what} must be above zero`)
const nullablePositive = z.number().positive('must be above zero').nullable()
// Per cylinder: piston, pin, rings, clips and the small-end share of the conrod. Stored to 0.1 g, so
// the floor keeps a tiny value from rounding to zero; the cap catches grams typed as kilograms.
// Empty (null) leaves the inertia forces off the sheet.
const reciprocatingMass = z
  .number({ error: 'must be a number of kilograms' })
  .positive({ error: 'must be above zero', abort: true })
  .min(0.001, 'must be at least 0.001 kg')
  .max(10, 'must be at most 10 kg per cylinder (enter kilograms, not grams)')
  .nullable()

export const OverRevBandSchema = z.object({
  id: line().trim().min(1).max(20),
  label: line().trim().min(1).max(80),
  minRpm: z.number().int().positive(),
  minDurationS: z.number().min(0).max(60),
  hysteresisRpm: z.number().min(0).max(2000),
})

export const EngineTypeUpdateSchema = z
  .object({
    name: line().trim().min(2).max(120),
    revLimitRpm: z.number().int().min(1000).max(25000),
    idleRpm: z.number().int().min(0).max(6000),
    bandWidthRpm: z.number().int().min(50).max(2000),
    referenceRpm: z.number().int().min(1000).max(25000),
    maxGapS: positive('maxGapS').max(60),
    reciprocatingMassKg: reciprocatingMass,
    overRevBands: z.array(OverRevBandSchema).min(1).max(6),
    lowOilPressure: z.object({ belowBar: z.number().min(0).max(20), aboveRpm: z.number().min(0).max(25000), minDurationS: z.number().min(0).max(60) }),
  })
  .partial()
  .refine((v) => Object.keys(v).length > 0, 'nothing to change')
  .refine((v) => !v.overRevBands || new Set(v.overRevBands.map((b) => b.id)).size === v.overRevBands.length, { message: 'band ids must be unique', path: ['overRevBands'] })

export const CharacteristicSchema = z.object({
  key: line().trim().regex(/^[a-z0-9_]{1,40}$/, 'use lower-case letters, digits and _'),
  label: line().trim().min(2).max(80),
  unit: z.enum(['mm', 'um', 'N', 'N*m', 'deg', '%', 'bar', 'kg', 'g']),
  nominal: z.number(),
  min: z.number(),
  max: z.number(),
}).refine((c) => c.min <= c.nominal && c.nominal <= c.max, { message: 'needs min <= nominal <= max', path: ['nominal'] })

/** Measured characteristics of a part type; keys name the readings, so they are unique. */
const CharacteristicsSchema = z
  .array(CharacteristicSchema)
  .max(40)
  .refine((list) => new Set(list.map((c) => c.key)).size === list.length, 'each key only once')

/** The figures a part type's life is computed from (a limit preview changes only these). */
export const componentTypeLifeFields = {
  limitHours: nullablePositive,
  limitKm: nullablePositive,
  limitEqHours: nullablePositive,
  limitOverRev: z.record(line().min(1).max(20), z.number().int().min(0).max(10000)),
  immediateInspectionBand: line().min(1).max(20).nullable(),
  warningLevel: z.number().gt(0, 'must be above 0').lt(1, 'must be below 1'),
  dueLevel: z.number().gt(0, 'must be above 0').lt(1, 'must be below 1'),
  damageExponent: z.number().min(0).max(40),
}

export const ComponentTypeUpdateSchema = z
  .object({
    name: line().trim().min(2).max(120),
    ...componentTypeLifeFields,
    characteristics: CharacteristicsSchema,
  })
  .partial()
  .refine((v) => Object.keys(v).length > 0, 'nothing to change')
  .refine((v) => v.warningLevel === undefined || v.dueLevel === undefined || v.warningLevel < v.dueLevel, { message: 'must be above the warning level', path: ['dueLevel'] })

export const ComponentTypeCreateSchema = z.object({
  code: line().trim().regex(/^[A-Z0-9-]{2,40}$/, 'use capitals, digits and -'),
  name: line().trim().min(2).max(120),
  category: line().trim().min(2).max(40),
  limitHours: nullablePositive.default(null),
  limitKm: nullablePositive.default(null),
  limitEqHours: nullablePositive.default(null),
  limitOverRev: z.record(line().min(1).max(20), z.number().int().min(0).max(10000)).default({}),
  immediateInspectionBand: line().min(1).max(20).nullable().default(null),
  warningLevel: z.number().gt(0).lt(1).default(0.8),
  dueLevel: z.number().gt(0).lt(1).default(0.9),
  damageExponent: z.number().min(0).max(40).default(0),
  characteristics: CharacteristicsSchema.default([]),
}).refine((v) => v.warningLevel < v.dueLevel, { message: 'must be above the warning level', path: ['dueLevel'] })
  .refine((v) => v.limitHours !== null || v.limitKm !== null || v.limitEqHours !== null || Object.keys(v.limitOverRev).length > 0, { message: 'a life-limited part needs at least one limit', path: ['limitHours'] })

export const EngineTypeCreateSchema = z.object({
  code: line().trim().regex(/^[A-Z0-9-]{2,40}$/, 'use capitals, digits and -'),
  name: line().trim().min(2).max(120),
  series: line().trim().min(2).max(80),
  cylinders: z.number().int().min(1).max(16),
  layout: line().trim().min(2).max(40),
  boreMm: z.number().positive().max(200),
  strokeMm: z.number().positive().max(200),
  conrodMm: z.number().positive().max(400),
  reciprocatingMassKg: reciprocatingMass.default(null),
  revLimitRpm: z.number().int().min(1000).max(25000),
  idleRpm: z.number().int().min(0).max(6000),
  bandWidthRpm: z.number().int().min(50).max(2000),
  referenceRpm: z.number().int().min(1000).max(25000),
  maxGapS: z.number().positive().max(60).default(1),
  overRevBands: z.array(OverRevBandSchema).min(1).max(6),
  lowOilPressure: z.object({ belowBar: z.number().min(0).max(20), aboveRpm: z.number().min(0).max(25000), minDurationS: z.number().min(0).max(60) }),
  positions: z.array(z.object({ position: line().trim().regex(/^[a-z0-9-]{1,40}$/, 'use lower-case letters, digits and -'), label: line().trim().min(1).max(80), componentTypeId: z.number().int().positive() })).min(1).max(80),
})
  .refine((v) => v.conrodMm > v.strokeMm / 2, { message: 'must be longer than the crank radius (stroke / 2)', path: ['conrodMm'] })
  .refine((v) => v.idleRpm < v.revLimitRpm, { message: 'must be below the rev limit', path: ['idleRpm'] })
  .refine((v) => new Set(v.positions.map((p) => p.position)).size === v.positions.length, { message: 'positions must be unique', path: ['positions'] })
  .refine((v) => new Set(v.overRevBands.map((b) => b.id)).size === v.overRevBands.length, { message: 'band ids must be unique', path: ['overRevBands'] })

export const SESSION_KINDS = ['practice', 'qualifying', 'race', 'test', 'bench'] as const

export const OverRevEventSchema = z.object({
  bandId: line().min(1).max(20),
  peakRpm: z.number().int().positive().max(30000),
  durationS: z.number().min(0).max(600),
  startS: z.number().min(0).default(0),
})

export const ManualSessionSchema = z.object({
  engineId: z.number().int().positive(),
  eventId: z.number().int().positive().nullable().default(null),
  kind: z.enum(SESSION_KINDS),
  startedAt: z.iso.datetime({ offset: true, error: 'must be a date-time such as 2026-11-28T14:00:00Z' }),
  runningSeconds: z.number({ error: 'must be a number' }).min(0, 'must not be negative').max(48 * 3600, 'must be at most 48 h'),
  distanceKm: z.number().min(0, 'must not be negative').max(10000).default(0),
  histogram: z.array(z.number().min(0, 'must not be negative').max(48 * 3600)).min(1).max(200),
  overRevs: z.array(OverRevEventSchema).max(500).default([]),
  /** true files a session whose start lies a few days outside its event's dates (shared/domain/session-date.ts) */
  confirmDate: z.boolean().default(false),
})
export type ManualSessionInput = z.infer<typeof ManualSessionSchema>

export const PlanSchema = z.object({
  chassis: line().trim().max(40).nullable().default(null),
  plannedSeconds: z.number().int().min(0).max(48 * 3600).nullable().default(null),
  plannedKm: z.number().min(0).max(10000).nullable().default(null),
})

export const InstallSchema = z.object({
  position: line().trim().min(1).max(40),
  serial: line().trim().min(1).max(60),
  at: z.iso.datetime({ offset: true }).optional(),
})

export const RemoveSchema = z.object({
  at: z.iso.datetime({ offset: true }).optional(),
  // no default: the one removing a part says what state it leaves in (a part taken out after an over-rev is not a spare)
  status: z.enum(['serviceable', 'quarantined', 'scrapped']),
})

export const EventCreateSchema = z.object({
  name: line().trim().min(2).max(120),
  series: line().trim().min(2).max(80),
  track: line().trim().min(2).max(120),
  trackLengthKm: z.number().positive().max(100),
  startsAt: z.iso.datetime({ offset: true }),
  endsAt: z.iso.datetime({ offset: true }),
  plannedSeconds: z.number().int().min(0).max(48 * 3600).nullable().default(null),
  plannedKm: z.number().min(0).max(10000).nullable().default(null),
}).refine((v) => Date.parse(v.endsAt) > Date.parse(v.startsAt), { message: 'must be after startsAt', path: ['endsAt'] })
