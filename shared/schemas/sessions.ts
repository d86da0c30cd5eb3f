// Finding sessions and correcting them: the list's filters, voiding and restoring.
import { z } from 'zod'
import { line } from '../text'
import { SESSION_KINDS } from './fleet'

const optionalId = z.union([z.literal('').transform(() => undefined), z.coerce.number().int().positive()]).optional()
const optionalDate = z.union([z.literal('').transform(() => undefined), z.iso.date({ error: 'must be a date such as 2026-11-28' })]).optional()

/** Voided sessions are hidden unless asked for: `show` lists them beside the others, `only` alone. */
export const VOIDED_FILTERS = ['hide', 'show', 'only'] as const
export const SESSION_SOURCES = ['logger', 'manual'] as const

export const SessionListQuerySchema = z
  .object({
    engineId: optionalId,
    eventId: optionalId,
    kind: z.union([z.literal('').transform(() => undefined), z.enum(SESSION_KINDS)]).optional(),
    source: z.union([z.literal('').transform(() => undefined), z.enum(SESSION_SOURCES)]).optional(),
    /** first and last day (UTC) of the session's start, both included */
    from: optionalDate,
    to: optionalDate,
    voided: z.enum(VOIDED_FILTERS).default('hide'),
    page: z.coerce.number().int().min(1).max(100_000).default(1),
    pageSize: z.coerce.number().int().min(1).max(100).default(25),
    dir: z.enum(['asc', 'desc']).default('desc'),
  })
  .refine((q) => !q.from || !q.to || q.from <= q.to, { message: 'must be on or after from', path: ['to'] })
export type SessionListQuery = z.infer<typeof SessionListQuerySchema>

export const VoidSessionSchema = z.object({
  reason: line({ error: 'a reason is needed: say why this session does not count' })
    .trim()
    .min(3, 'a reason is needed: say why this session does not count (at least 3 characters)')
    .max(500, 'must be at most 500 characters'),
})
export type VoidSessionInput = z.infer<typeof VoidSessionSchema>

export const RestoreSessionSchema = z.object({
  reason: line().trim().max(500, 'must be at most 500 characters').default(''),
})
export type RestoreSessionInput = z.infer<typeof RestoreSessionSchema>
