// Loads fleet rows and converts them into domain shapes and DTOs at the repository boundary
// (DECIMAL strings to numbers, JSON columns parsed, dates to ISO strings).
import type { Knex } from 'knex'
import type { ComponentLimits, EngineSession, EngineTypeLifeConfig, Installation, OverRevBand, OverRevEvent } from '#shared/domain/life'
import { engineTypeSheet } from '#shared/domain/kinematics'
import { withSerialLimits, type SerialLimits } from '#shared/domain/part-state'
import { decodeMoments, type RpmMoments } from '#shared/domain/rpm-moments'
import type { ComponentTypeDto, EngineTypeDto, EventDto, EventRunDto, SessionDto } from '#shared/types/fleet'
import { iso, json, num, numOrNull } from '../utils/db'

type Db = Knex | Knex.Transaction

export function toEngineType(r: any, positions: any[] = []): EngineTypeDto {
  const t = {
    id: r.id,
    code: r.code,
    name: r.name,
    series: r.series,
    cylinders: r.cylinders,
    layout: r.layout,
    boreMm: num(r.bore_mm),
    strokeMm: num(r.stroke_mm),
    conrodMm: num(r.conrod_mm),
    reciprocatingMassKg: numOrNull(r.reciprocating_mass_kg),
    revLimitRpm: r.rev_limit_rpm,
    idleRpm: r.idle_rpm,
    bandWidthRpm: r.band_width_rpm,
    referenceRpm: r.reference_rpm,
    maxGapS: num(r.max_gap_s),
    overRevBands: json<OverRevBand[]>(r.over_rev_bands, []),
    lowOilPressure: json(r.low_oil_pressure, { belowBar: 1, aboveRpm: 4000, minDurationS: 0.5 }),
    positions: positions
      .filter((p) => p.engine_type_id === r.id)
      .map((p) => ({ position: p.position, label: p.label, componentTypeId: p.component_type_id, sort: p.sort }))
      .sort((a, b) => a.sort - b.sort),
  }
  return {
    ...t,
    sheet: engineTypeSheet({
      cylinders: t.cylinders,
      boreMm: t.boreMm,
      strokeMm: t.strokeMm,
      conrodMm: t.conrodMm,
      revLimitRpm: t.revLimitRpm,
      reciprocatingMassKg: t.reciprocatingMassKg,
      overRevBands: t.overRevBands,
    }),
  }
}

export function toComponentType(r: any): ComponentTypeDto {
  return {
    id: r.id,
    code: r.code,
    name: r.name,
    category: r.category,
    limitHours: numOrNull(r.limit_hours),
    limitKm: numOrNull(r.limit_km),
    limitEqHours: numOrNull(r.limit_eq_hours),
    limitOverRev: json<Record<string, number>>(r.limit_over_rev, {}),
    immediateInspectionBand: r.immediate_inspection_band ?? null,
    warningLevel: num(r.warning_level),
    dueLevel: num(r.due_level),
    damageExponent: num(r.damage_exponent),
    characteristics: json(r.characteristics, []),
  }
}

export function lifeConfig(t: EngineTypeDto): EngineTypeLifeConfig {
  return { referenceRpm: t.referenceRpm, revLimitRpm: t.revLimitRpm, bandWidthRpm: t.bandWidthRpm, overRevBands: [...t.overRevBands].sort((a, b) => a.minRpm - b.minRpm) }
}

/** The limits a part runs to: its type's, with any set for its serial by a concession (pass the component row). */
export function limitsOf(c: ComponentTypeDto, comp?: { serial_limits?: unknown } | null): ComponentLimits {
  return withSerialLimits({
    hours: c.limitHours,
    km: c.limitKm,
    eqHours: c.limitEqHours,
    overRevEvents: c.limitOverRev,
    immediateInspectionBand: c.immediateInspectionBand,
    warningLevel: c.warningLevel,
    dueLevel: c.dueLevel,
    damageExponent: c.damageExponent,
  }, comp ? json<SerialLimits | null>(comp.serial_limits, null) : null)
}

export async function loadEngineTypes(db: Db, where?: (qb: Knex.QueryBuilder) => void): Promise<EngineTypeDto[]> {
  const qb = db('engine_types').select('*').orderBy('code')
  if (where) where(qb)
  const rows = await qb
  const positions = rows.length ? await db('engine_type_positions').whereIn('engine_type_id', rows.map((r) => r.id)) : []
  return rows.map((r) => toEngineType(r, positions))
}

export async function loadComponentTypes(db: Db, where?: (qb: Knex.QueryBuilder) => void): Promise<ComponentTypeDto[]> {
  const qb = db('component_types').select('*').orderBy(['category', 'code'])
  if (where) where(qb)
  return (await qb).map(toComponentType)
}

export function toInstallation(r: any): Installation & { id: number } {
  return { id: r.id, componentId: r.component_id, engineId: r.engine_id, position: r.position, from: iso(r.from_at)!, to: iso(r.to_at) }
}

/** A session in the life engine's shape, keeping the band width it was binned with. */
export function toEngineSession(r: any): EngineSession & { bandWidthRpm: number; eventId: number | null } {
  return {
    sessionId: r.id,
    engineId: r.engine_id,
    eventId: r.event_id ?? null,
    at: iso(r.started_at)!,
    runningSeconds: num(r.running_seconds),
    distanceKm: num(r.distance_km),
    histogram: json<number[]>(r.histogram, []),
    rpmMoments: momentsOf(r.rpm_moments),
    overRevs: json(r.over_revs, []),
    bandWidthRpm: r.band_width_rpm,
  }
}

export function momentsOf(v: unknown): RpmMoments | null {
  if (v === null || v === undefined) return null
  return decodeMoments(v as Uint8Array)
}


export function toSessionDto(r: any): SessionDto {
  return {
    id: r.id,
    engineId: r.engine_id,
    engineSerial: r.engine_serial,
    eventId: r.event_id ?? null,
    eventName: r.event_name ?? null,
    kind: r.kind,
    startedAt: iso(r.started_at)!,
    runningSeconds: num(r.running_seconds),
    distanceKm: num(r.distance_km),
    bandWidthRpm: r.band_width_rpm,
    histogram: json(r.histogram, []),
    // the profile stays on the server: it serves re-classification and damage figures
    overRevs: json<OverRevEvent[]>(r.over_revs, []).map(({ profile: _profile, ...ev }) => ev),
    lowOilPressure: json(r.low_oil_pressure, []),
    eqExact: r.rpm_moments !== null && r.rpm_moments !== undefined,
    maxRpm: r.max_rpm ?? null,
    maxOilTempC: numOrNull(r.max_oil_temp_c),
    maxWaterTempC: numOrNull(r.max_water_temp_c),
    maxSpeedKmh: numOrNull(r.max_speed_kmh),
    minOilPressureBar: numOrNull(r.min_oil_pressure_bar),
    source: r.source,
    fileName: r.file_name ?? null,
    hasFile: Boolean(r.file_key),
    voided: r.voided_at ? { at: iso(r.voided_at)!, byName: r.voided_by_name ?? null, reason: r.void_reason ?? '' } : null,
  }
}

export function toEventDto(r: any, plans: any[] = [], ran: EventRunDto[] = []): EventDto {
  return {
    id: r.id,
    name: r.name,
    series: r.series,
    track: r.track,
    trackLengthKm: num(r.track_length_km),
    startsAt: iso(r.starts_at)!,
    endsAt: iso(r.ends_at)!,
    plannedSeconds: r.planned_seconds ?? null,
    plannedKm: numOrNull(r.planned_km),
    plans: plans
      .filter((p) => p.event_id === r.id)
      .map((p) => ({
        engineId: p.engine_id,
        engineSerial: p.engine_serial,
        teamId: p.team_id,
        chassis: p.chassis ?? null,
        plannedSeconds: p.planned_seconds ?? null,
        plannedKm: numOrNull(p.planned_km),
      })),
    ran,
  }
}

/** Every write that moves life bumps this, so that cached fleet life is recomputed on every instance. */
export async function bumpLifeRevision(db: Db) {
  await db('life_revision').where('id', 1).increment('revision', 1)
}

export async function lifeRevision(db: Db): Promise<number> {
  const row = await db('life_revision').where('id', 1).first('revision')
  return Number(row?.revision ?? 0)
}
