// Answer shape of a limit preview, shared by the server route and the preview dialog.
import type { LimitPreviewResult, LimitPreviewSummary } from '../domain/limit-preview'

export type { LimitPreviewResult, LimitPreviewSummary }
export type { DueChange, DuePoint, FinishChange, StatusChange, TeamRemaining } from '../domain/limit-preview'

export type LimitTargetKind = 'component-type' | 'engine-type'

export interface LimitPreviewDto extends LimitPreviewResult {
  target: { kind: LimitTargetKind; id: number; code: string; name: string }
  /** the proposed values, and the values they replace, field by field (only fields that differ) */
  fields: { field: string; before: unknown; after: unknown }[]
  summary: LimitPreviewSummary
  /** engines and parts the computation covered (the supplier's fleet) */
  covered: { engines: number; parts: number; events: number }
  computedAt: string
  /** where the time went; `rows`: kept from the last preview, shared with the board's life, or read for this preview */
  timingsMs: { check: number; readAndBefore: number; rows: 'kept' | 'board' | 'read'; after: number; compare: number }
  /** hand back with the change to save it; refused (409) when the data the preview saw has moved */
  previewToken: string
}

export interface LimitSaveDto {
  target: LimitPreviewDto['target']
  summary: LimitPreviewSummary
}
