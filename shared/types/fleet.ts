// Answer shapes of the fleet API, shared by server routes and pages.
import type { LifeStatus, LimitMeasure, OverRevBand } from '../domain/life'
import type { EngineTypeSheet } from '../domain/kinematics'
import type { CanFinishReason } from '../domain/forecast'
import type { TraceChart } from '../domain/trace/chart'

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
  /** the engine has no recent running: the projection assumes steady running at the rev limit */
  dutyAssumed: boolean
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
  /** the latest session that counts (voided ones do not) */
  lastSession: { id: number; startedAt: string } | null
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
  /** the verdict (bandId) decided once when the session was read; secondsAbove per band id for logger events */
  overRevs: { bandId: string; peakRpm: number; durationS: number; startS: number; secondsAbove?: Record<string, number> }[]
  lowOilPressure: { startS: number; durationS: number; minBar: number }[]
  /** true when equivalent hours come from the session's rpm moments (exact), false for band data only */
  eqExact: boolean
  maxRpm: number | null
  maxOilTempC: number | null
  maxWaterTempC: number | null
  maxSpeedKmh: number | null
  minOilPressureBar: number | null
  source: 'manual' | 'logger'
  fileName: string | null
  /** the raw file is kept, so the session can be read again */
  hasFile: boolean
  /** a voided session counts nowhere (life, board, forecasts, alerts) until it is restored */
  voided: SessionVoidDto | null
}

export interface SessionVoidDto {
  at: string
  byName: string | null
  reason: string
}

/** One row of the sessions list (no histogram or trace details). */
export interface SessionListItemDto {
  id: number
  engineId: number
  engineSerial: string
  engineTypeCode: string
  teamName: string | null
  eventId: number | null
  eventName: string | null
  kind: SessionDto['kind']
  startedAt: string
  runningSeconds: number
  distanceKm: number
  maxRpm: number | null
  overRevCount: number
  source: 'manual' | 'logger'
  fileName: string | null
  voided: SessionVoidDto | null
}

export interface SessionListDto {
  items: SessionListItemDto[]
  total: number
  page: number
  pageSize: number
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
  /** engines that ran the event (the actor's own, or all for the supplier), with their sessions in order */
  ran: EventRunDto[]
}

export interface EventRunDto {
  engineId: number
  engineSerial: string
  teamName: string | null
  runningSeconds: number
  sessions: { id: number; kind: string; startedAt: string; runningSeconds: number }[]
}

/** What one session cost one part fitted at the time. */
export interface SessionCostDto {
  componentId: number
  serial: string
  position: string
  typeName: string
  category: string
  damageExponent: number
  hours: number
  km: number
  eqHours: number
  /** for band data only: the range the exact value lies in (band low and high edges) */
  eqHoursRange: { low: number; high: number } | null
  overRevCounts: Record<string, number>
  fraction: number
  governing: LimitMeasure | null
}

export interface OverRevDamageDto {
  exponent: number
  eqHours: number
  /** beyond what the same time at the rev limit would have cost */
  extraEqHours: number
}

export interface SessionViewDto {
  session: SessionDto
  details: {
    overview: { t: number; rpm: number }[]
    warnings: { row: number; column?: string; message: string }[]
    skippedRows: number
    rows: number | null
    gaps: { atS: number; seconds: number }[]
    gapCount: number
    distanceSource: string | null
    /** metadata lines the logger wrote before the channel names */
    loggerMetadata: string[]
  } | null
  /** the trace over time for the charts (downsampled, with the over-rev and low oil pressure markers); null without a trace */
  chart: TraceChart | null
  /** largest relative error of the equivalent hours shown, over the exponents of the fitted parts (exact sessions) */
  eqErrorBound: number | null
  cost: SessionCostDto[]
  /** per over-rev event (same order as session.overRevs): its damage per damage exponent of the fitted parts; null when entered by hand */
  overRevDamage: (OverRevDamageDto[] | null)[]
  /** per over-rev event: the reciprocating inertia force at its peak rpm, TDC (rod in tension), N; null without a mass */
  overRevPeakForceN: (number | null)[]
  engineType: { code: string; revLimitRpm: number; referenceRpm: number; overRevBands: OverRevBand[]; bandWidthRpm: number }
}
