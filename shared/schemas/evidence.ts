import { z } from 'zod'
import { FAILURE_MODES, EVIDENCE_MEASURES, NOT_A_FAILURE } from '../domain/evidence'

/** The supplier engineer's classification of a finding; null takes the classification back. */
export const FailureModeSchema = z.object({
  failureMode: z.enum([...FAILURE_MODES, NOT_A_FAILURE], { error: `must be one of ${[...FAILURE_MODES, NOT_A_FAILURE].join(', ')}, or null` }).nullable(),
})

export const EvidenceQuerySchema = z.object({
  measure: z.enum(EVIDENCE_MEASURES, { error: `must be one of ${EVIDENCE_MEASURES.join(', ')}` }).default('hours'),
})
