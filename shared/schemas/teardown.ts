// Schemas shared by the teardown forms and the teardown API.
import { z } from 'zod'
import { line, multiline } from '../text'
import { REMOVAL_STATES } from '../domain/part-state'
import { CHARACTERISTIC_UNITS, DISPOSITIONS, TEARDOWN_CONDITIONS } from '../domain/teardown'
import { EVIDENCE_MEASURES, FAILURE_MODES, NOT_A_FAILURE } from '../domain/evidence'

export const TEARDOWN_REASONS = ['life due', 'over-rev inspection', 'oil alarm', 'failure', 'scheduled'] as const
export type TeardownReason = (typeof TEARDOWN_REASONS)[number]
export const TEARDOWN_STATES = ['open', 'awaiting sign-off', 'signed off'] as const
export type TeardownState = (typeof TEARDOWN_STATES)[number]

/** Who may open a teardown and work on it. */
export const TEARDOWN_WORKERS = ['admin', 'supplier_engineer', 'mechanic'] as const
/** Who may sign a rebuild off (always a second person). */
export const TEARDOWN_SIGNERS = ['supplier_engineer', 'mechanic'] as const

/** Photos larger than this are refused while the upload is read. */
export const PHOTO_MAX_BYTES = 8 * 1024 * 1024
export const PHOTO_TYPES = ['image/png', 'image/jpeg', 'image/webp'] as const

const text = (max: number) => multiline().trim().max(max, `must be at most ${max} characters`)

export const TeardownStartSchema = z.object({
  engineId: z.number({ error: 'must be a number' }).int().positive(),
  reason: z.enum(TEARDOWN_REASONS, { error: `must be one of ${TEARDOWN_REASONS.join(', ')}` }),
  note: text(2000).nullable().default(null),
})

export const MeasurementSchema = z.object({
  componentId: z.number({ error: 'must be a number' }).int().positive(),
  key: line().trim().min(1, 'is required').max(60),
  value: z.number({ error: 'must be a number' }).finite('must be a finite number'),
  // Optional: the unit the value was read in, converted to the characteristic's unit (mm <-> um).
  unit: z.enum(CHARACTERISTIC_UNITS, { error: `must be one of ${CHARACTERISTIC_UNITS.join(', ')}` }).optional(),
  // The reading's version the client last saw (0: none yet). Another one stored answers 409 with the current reading.
  baseVersion: z.number({ error: 'must be a number' }).int('must be a whole number').min(0, 'must be 0 or more').optional(),
})

export const FindingSchema = z.object({
  componentId: z.number({ error: 'must be a number' }).int().positive(),
  condition: line().refine((c) => TEARDOWN_CONDITIONS.includes(c), { message: `must be one of ${TEARDOWN_CONDITIONS.join(', ')}` }),
  note: text(2000).nullable().default(null),
  disposition: z.enum(DISPOSITIONS, { error: `must be one of ${DISPOSITIONS.join(', ')}` }),
})

export const FindingUpdateSchema = FindingSchema.omit({ componentId: true })
  .partial()
  .refine((v) => Object.keys(v).length > 0, 'nothing to change')

export const SwapSchema = z.object({
  position: line().trim().min(1, 'is required').max(40),
  serial: line().trim().min(1, 'is required').max(60),
  reason: line().trim().min(3, 'say why the part is changed (at least 3 characters)').max(500),
  overrideReason: line().trim().min(3, 'must be at least 3 characters').max(500).optional(),
  // Required whenever a part is fitted at the position (the service says so naming the serial).
  removedDisposition: z.enum(REMOVAL_STATES, { error: `must be one of ${REMOVAL_STATES.join(', ')}` }).optional(),
})

export const SignOffSchema = z.object({
  note: text(2000).nullable().default(null),
  confirm: z.literal(true, { error: 'must be true: the signer confirms the rebuild was inspected' }),
})

export const TeardownListQuery = z.object({
  state: z.enum(TEARDOWN_STATES).optional(),
  engineId: z.coerce.number().int().positive().optional(),
})

/** The supplier engineer's classification of a finding for the field evidence; null takes it back. */
export const FailureModeSchema = z.object({
  failureMode: z.enum([...FAILURE_MODES, NOT_A_FAILURE], { error: `must be one of ${[...FAILURE_MODES, NOT_A_FAILURE].join(', ')}, or null` }).nullable(),
})

/** Which life measure the field evidence of a part type is read in. */
export const EvidenceQuerySchema = z.object({
  measure: z.enum(EVIDENCE_MEASURES, { error: `must be one of ${EVIDENCE_MEASURES.join(', ')}` }).default('hours'),
})
