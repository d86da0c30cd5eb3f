// Schemas for releasing a part with a concession (form and API).
import { z } from 'zod'
import { line } from '../text'

/** Who may release a held or over-limit part: the supplier's engineers (and admins). */
export const CONCESSION_GRANTERS = ['admin', 'supplier_engineer'] as const

const newLimit = (unit: string) => z.number({ error: `must be a number of ${unit}` }).positive('must be above zero').max(1_000_000, 'is implausibly large')

export const ConcessionSchema = z
  .object({
    // One line, as every reason in the product is (notes are the multi-line fields).
    reason: line().trim().min(10, 'say what was inspected and why the part may run (at least 10 characters)').max(2000, 'must be at most 2000 characters'),
    limitHours: newLimit('hours').optional(),
    limitKm: newLimit('km').optional(),
    limitEqHours: newLimit('equivalent hours').optional(),
    limitOverRev: z.record(line().min(1).max(20), z.number({ error: 'must be a whole number of events' }).int('must be a whole number of events').min(0).max(10000)).optional(),
    findingIds: z.array(z.number({ error: 'must be finding ids' }).int().positive()).max(50).default([]),
  })
  .strict()
export type ConcessionInput = z.infer<typeof ConcessionSchema>
