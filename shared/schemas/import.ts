import { z } from 'zod'
import { line } from '../text'
import { LoggerMappingSchema } from '../domain/logger-mapping'
import { SESSION_KINDS } from './fleet'

// Metadata of a logger upload travels in the query string; the body is the raw file.
export const ImportQuerySchema = z.object({
  engineId: z.coerce.number().int().positive(),
  eventId: z.union([z.literal('').transform(() => null), z.coerce.number().int().positive()]).nullable().default(null),
  kind: z.enum(SESSION_KINDS),
  startedAt: z.iso.datetime({ offset: true, error: 'must be a date-time such as 2026-11-28T14:00:00Z' }),
  confirmDate: z.enum(['true', 'false']).default('false').transform((v) => v === 'true'),
  laps: z.union([z.literal('').transform(() => null), z.coerce.number().int().min(0).max(2000)]).nullable().default(null),
  fileName: line().trim().min(1).max(255).default('logger.csv'),
  mapping: line()
    .transform((s, ctx) => {
      try {
        return JSON.parse(s)
      } catch {
        ctx.addIssue({ code: 'custom', message: 'must be JSON' })
        return z.NEVER
      }
    })
    .pipe(LoggerMappingSchema),
})

export const LoggerProfileSchema = z.object({
  name: line().trim().min(1).max(80),
  header: z.array(line().max(200)).min(2).max(400),
  mapping: LoggerMappingSchema,
})

/** A resumable upload's id, as the tus server names it (16 random bytes in hex). */
export const UploadIdParams = z.object({ id: line().regex(/^[0-9a-f]{32}$/, 'must be an upload id') })
