// Schemas shared by the billing forms and the billing API. Money is whole minor units.
import { z } from 'zod'
import { line, multiline } from '../text'
import { isCurrencyCode } from '../domain/billing/money'
import { FEE_BASES, USAGE_UNITS } from '../domain/billing/statement'
import { DISPOSITIONS } from '../domain/teardown'
import { TEARDOWN_REASONS } from './teardown'

// the role lists live with the others (no zod), so a page's meta can name them without pulling in the schemas
export { BILLING_WRITERS, STATEMENT_READERS } from '../roles'

export const PAYMENT_STATUSES = ['queued', 'open', 'paid', 'overdue', 'void'] as const
export type PaymentStatus = (typeof PAYMENT_STATUSES)[number]
export const STATEMENT_STATES = ['draft', 'reviewed', 'issued'] as const
export type StatementState = (typeof STATEMENT_STATES)[number]

const MAX_MINOR = 1_000_000_000_000
const money = () =>
  z.number({ error: 'must be a number of minor units' }).int('must be whole minor units (an integer)').min(0, 'must not be negative').max(MAX_MINOR, 'is too large')
const id = () => z.number({ error: 'must be a number' }).int().positive()
const date = () => line().regex(/^\d{4}-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])$/, 'must be a date YYYY-MM-DD')

export const ContractSchema = z
  .object({
    teamId: id(),
    engineId: id().nullable().default(null),
    engineTypeId: id().nullable().default(null),
    validFrom: date(),
    validTo: date(),
    currency: line().refine(isCurrencyCode, 'must be an ISO 4217 currency code such as EUR'),
    feeBasis: z.enum(FEE_BASES, { error: `must be one of ${FEE_BASES.join(', ')}` }),
    feeMinor: money(),
    allowanceUnit: z.enum(USAGE_UNITS, { error: `must be one of ${USAGE_UNITS.join(', ')}` }),
    allowance: z.number({ error: 'must be a number' }).int('must be whole km or hours').min(0, 'must not be negative').max(10_000_000),
    overageRateMinor: money(),
    rebuildCharges: z.partialRecord(z.enum(TEARDOWN_REASONS, { error: `must be one of ${TEARDOWN_REASONS.join(', ')}` }), money()).default({}),
    overRevCharges: z.record(line().min(1).max(20), money()).default({}),
    damageCharges: z.partialRecord(z.enum(DISPOSITIONS, { error: `must be one of ${DISPOSITIONS.join(', ')}` }), money()).default({}),
    taxRateBp: z.number({ error: 'must be a number' }).int('must be whole basis points (2000 is 20 %)').min(0, 'must not be negative').max(10_000),
    note: multiline().max(500).nullable().default(null),
  })
  .refine((c) => (c.engineId === null) !== (c.engineTypeId === null), { message: 'give either an engine or an engine type', path: ['engineId'] })
  .refine((c) => c.validTo >= c.validFrom, { message: 'must not be before validFrom', path: ['validTo'] })
export type ContractInput = z.infer<typeof ContractSchema>

/** A contract ends early (a price change mid-season: end it, then add the new one from the next day). */
export const EndContractSchema = z.object({ validTo: date() })

export const GenerateStatementSchema = z
  .object({
    teamId: id(),
    month: line().regex(/^\d{4}-(0[1-9]|1[0-2])$/, 'must be a month YYYY-MM').optional(),
    eventId: id().optional(),
  })
  .refine((s) => (s.month === undefined) !== (s.eventId === undefined), { message: 'give either a month or an event', path: ['month'] })
export type GenerateStatementInput = z.infer<typeof GenerateStatementSchema>

export const StatementListQuery = z.object({
  teamId: z.coerce.number().int().positive().optional(),
  state: z.enum(STATEMENT_STATES).optional(),
})

export const FindingChargeSchema = z.object({ reason: line().trim().min(1, 'is required').max(500) })

export const BillingContactSchema = z.object({
  billingEmail: z.email('must be an e-mail address').max(190).nullable(),
  billingAddress: multiline().trim().max(500).nullable(),
  taxId: line().trim().max(40).nullable().default(null),
})
