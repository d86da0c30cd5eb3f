import type { EvidenceMeasure, LifeFigures, ModeEvidence } from '../domain/evidence'

/** The field evidence of one part type in one life measure (GET /api/component-types/:id/evidence). */
export interface PartTypeEvidenceDto {
  componentType: { id: number; code: string; name: string; category: string }
  measure: EvidenceMeasure
  unit: string
  measureLabel: string
  /** the part type's current limit in this measure (none for over-rev counts: those are per band) */
  limit: number | null
  minFailures: number
  confidence: number
  /** some equivalent hours come from band midpoints (sessions entered by hand without rpm detail) */
  approximate: boolean
  modes: ModeEvidence[]
  parts: { componentId: number; serial: string; status: string; running: boolean; removedAt: string | null; sessions: number; life: LifeFigures }[]
  findings: EvidenceFindingDto[]
  unclassified: number
}

export interface EvidenceFindingDto {
  findingId: number
  teardownId: number
  componentId: number
  serial: string
  engineSerial: string
  at: string
  condition: string
  disposition: string
  note: string | null
  failureMode: string | null
  classifiedAt: string | null
  classifiedByName: string | null
  life: LifeFigures
}
