// Answer shapes of the fleet API, shared by server routes and pages.
import type { LifeStatus, LimitMeasure, OverRevBand } from '../domain/life'
import type { EngineTypeSheet } from '../domain/kinematics'
import type { CanFinishReason } from '../domain/forecast'

export type { LifeStatus, LimitMeasure, OverRevBand }

export interface Characteristic {
  key: string
  label: string
  unit: string
  nominal: number
  min: number
  max: number
}

export interface EngineTypeDto {
  id: number
  code: string
  name: string
  series: string
  cylinders: number
  layout: string
  boreMm: number
  strokeMm: number
  conrodMm: number
  reciprocatingMassKg: number | null
  revLimitRpm: number
  idleRpm: number
  bandWidthRpm: number
  referenceRpm: number
  maxGapS: number
  overRevBands: OverRevBand[]
  lowOilPressure: { belowBar: number; aboveRpm: number; minDurationS: number }
  positions: { position: string; label: string; componentTypeId: number; sort: number }[]
  sheet: EngineTypeSheet
}

export interface ComponentTypeDto {
  id: number
  code: string
  name: string
  category: string
  limitHours: number | null
  limitKm: number | null
  limitEqHours: number | null
  limitOverRev: Record<string, number>
  immediateInspectionBand: string | null
  warningLevel: number
  dueLevel: number
  damageExponent: number
  characteristics: Characteristic[]
}

export interface EventRefDto {
  eventId: number
  name: string
}

export interface PartLifeDto {
  componentId: number
  serial: string
  position: string | null
  positionLabel: string | null
  componentTypeId: number
  typeName: string
  category: string
  status: LifeStatus
  fraction: number
  governing: LimitMeasure | null
  measures: LimitMeasure[]
  hours: number
  km: number
  eqHours: number
  overRevCounts: Record<string, number>
  immediateInspection: boolean
  warningAt: EventRefDto | null
  dueAt: EventRefDto | null
  limitAt: EventRefDto | null
  assumedDuty: boolean
}

export interface CanFinishDto {
  eventId: number
  name: string
  startsAt: string
  ok: boolean
  worstFraction: number
  governingPartId: number | null
  reason: CanFinishReason | null
  assigned: boolean
  chassis: string | null
}

export interface GroupLifeDto {
  category: string
  fraction: number
  status: LifeStatus
  governing: LimitMeasure | null
  serial: string
}

export interface EngineSummaryDto {
  id: number
  serial: string
  engineTypeId: number
  engineTypeCode: string
  engineTypeName: string
  series: string
  supplierId: number
  teamId: number | null
  teamName: string | null
  status: 'active' | 'teardown' | 'retired'
  location: 'car' | 'shelf' | 'supplier' | 'teardown'
  chassis: string | null
  builtAt: string
  rebuiltAt: string | null
  totalHours: number
  hoursSinceRebuild: number
  sessions: number
  worst: { fraction: number; status: LifeStatus; governing: LimitMeasure | null; serial: string | null; position: string | null; typeName: string | null }
  groups: GroupLifeDto[]
  overRevFlags: { immediateInspection: boolean; events: number }
  oilStatus: 'normal' | 'caution' | 'critical' | null
  warningAt: EventRefDto | null
  limitAt: EventRefDto | null
  nextEvent: CanFinishDto | null
  canFinish: CanFinishDto[]
}

export interface EngineDetailDto extends EngineSummaryDto {
  parts: PartLifeDto[]
  emptyPositions: { position: string; label: string; componentTypeId: number }[]
}

export interface SessionDto {
  id: number
  engineId: number
  engineSerial: string
  eventId: number | null
  eventName: string | null
  kind: 'practice' | 'qualifying' | 'race' | 'test' | 'bench'
  startedAt: string
  runningSeconds: number
  distanceKm: number
  bandWidthRpm: number
  histogram: number[]
  overRevs: { bandId: string; peakRpm: number; durationS: number; startS: number }[]
  lowOilPressure: { startS: number; durationS: number; minBar: number }[]
  maxRpm: number | null
  maxOilTempC: number | null
  maxWaterTempC: number | null
  maxSpeedKmh: number | null
  minOilPressureBar: number | null
  source: 'manual' | 'logger'
  fileName: string | null
}

export interface EventDto {
  id: number
  name: string
  series: string
  track: string
  trackLengthKm: number
  startsAt: string
  endsAt: string
  plannedSeconds: number | null
  plannedKm: number | null
  plans: { engineId: number; engineSerial: string; teamId: number; chassis: string | null; plannedSeconds: number | null; plannedKm: number | null }[]
}
