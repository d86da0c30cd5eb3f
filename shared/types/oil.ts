import type { GradeBasis, OilLimits, OilReason, OilSampleValues, OilStatus, PopulationLimit } from '#shared/domain/oil/limits'
import type { OilCsvMapping, ParticleBasis } from '#shared/domain/oil/lab-csv'

export interface OilSampleDto extends OilSampleValues {
  id: number
  engineId: number
  lab: string | null
  source: 'form' | 'csv' | 'seed'
  attachment: { name: string; size: number } | null
  createdAt: string | null
  status: OilStatus
  reasons: OilReason[]
  iso4406: string | null
  viscosityIndex: number | null
  /** the grade the checks used: the sample's own, or the engine type's */
  gradeBasis: GradeBasis | null
  gradeCheck: { ok: boolean; min: number; max: number } | null
  hthsCheck: { ok: boolean; min: number } | null
  /** percent change from the engine type's new-oil reference */
  viscosityChange: { kv40Pct: number | null; kv100Pct: number | null }
  previousSampleId: string | null
  /** raised by every correction: a correction names the version it started from */
  version: number
}

export interface OilEngineStatusDto {
  engineId: number
  serial: string
  engineTypeId: number
  engineTypeCode: string
  teamName: string | null
  samples: number
  latest: { sampleId: string; sampledAt: string; status: OilStatus; reasons: OilReason[] } | null
}

export interface OilEngineDto {
  engine: { id: number; serial: string; engineTypeId: number; engineTypeCode: string; teamName: string | null; builtAt: string | null }
  limits: OilLimits
  limitsAreDefault: boolean
  population: PopulationLimit[]
  samples: OilSampleDto[]
}

export interface OilLimitsDto {
  engineTypeId: number
  engineTypeCode: string
  engineTypeName: string
  limits: OilLimits
  isDefault: boolean
  population: PopulationLimit[]
  populationSamples: number
}

export interface OilImportResult {
  imported: number
  sampleIds: string[]
}

export interface OilLabMappingDto {
  id: number
  lab: string
  headerSignature: string
  mapping: OilCsvMapping
  /** volume the lab's particle counts refer to */
  particleBasis: ParticleBasis
  updatedAt: string | null
}
