// Storing a session (manual entry or logger import): checks against the engine type, one transaction, audited.
import type { Knex } from 'knex'
import type { ManualSessionInput } from '#shared/schemas/fleet'
import { encodeMoments, histogramEqHoursBounds, momentsRelativeErrorBound, type RpmMoments } from '#shared/domain/rpm-moments'
import { addSession, emptyUsage, evaluatePartLife } from '#shared/domain/life'
import { excursionDamage } from '#shared/domain/over-rev'
import { inertiaForceAtRpm } from '#shared/domain/kinematics'
import type { SessionCostDto, SessionViewDto } from '#shared/types/fleet'
import type { Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { bumpLifeRevision, lifeConfig, limitsOf, loadComponentTypes, loadEngineTypes, toEngineSession, toSessionDto } from './fleet-data'
import { canSee } from '../utils/guard'
import { iso, json } from '../utils/db'
import { checkSessionDate, type EventDates } from '#shared/domain/session-date'
import { engineRowFor } from './engine-rows'
import { sessionChart } from './session-chart'
import { announceLifeChanged } from '../utils/life-events'

export interface SessionExtras {
  /** exact equivalent hours for any exponent (sessions read from a logger file) */
  rpmMoments?: RpmMoments | null
  lowOilPressure?: { startS: number; durationS: number; minBar: number }[]
  maxRpm?: number | null
  maxOilTempC?: number | null
  maxWaterTempC?: number | null
  maxSpeedKmh?: number | null
  minOilPressureBar?: number | null
  source?: 'manual' | 'logger'
  fileKey?: string | null
  fileName?: string | null
  fileSha256?: string | null
  details?: unknown
  /** every channel's range per overview bucket (shared/domain/trace/overview.ts) */
  traceOverview?: unknown
}

export function expectedBands(t: { revLimitRpm: number; bandWidthRpm: number }) {
  return Math.ceil((t.revLimitRpm + 1000) / t.bandWidthRpm)
}

/** Checks a session against its engine and event; answers the engine type for the caller. */
export async function checkSession(trx: Knex.Transaction, actor: Actor, input: ManualSessionInput, opts: { exactBands: boolean }) {
  const engine = await engineRowFor(trx, actor, input.engineId, { forUpdate: true })
  if (engine.status === 'teardown') conflict(`${engine.serial} is in teardown: sessions can be logged again after its rebuild is signed off`)
  if (engine.status === 'retired') conflict(`${engine.serial} is retired`)
  const [type] = await loadEngineTypes(trx, (qb) => qb.where('id', engine.engine_type_id))
  let eventDates: EventDates | null = null
  if (input.eventId !== null) {
    const ev = await trx('events').where('id', input.eventId).first()
    if (!ev || ev.supplier_id !== engine.supplier_id) notFound('Event')
    // An engine type runs in one series: an event of another series cannot be right.
    if (ev.series !== type!.series) badRequest(`Invalid input: eventId: ${ev.name} belongs to the ${ev.series}, not to ${type!.code} engines`)
    eventDates = { name: ev.name, startsAt: iso(ev.starts_at)!, endsAt: iso(ev.ends_at)! }
  }
  const bands = expectedBands(type!)
  if (opts.exactBands ? input.histogram.length !== bands : input.histogram.length > bands + 40) {
    badRequest(`Invalid input: histogram: ${type!.code} has ${bands} bands of ${type!.bandWidthRpm} rpm (0 to ${bands * type!.bandWidthRpm} rpm); ${input.histogram.length} were given`)
  }
  const histogramSeconds = input.histogram.reduce((a, b) => a + b, 0)
  if (Math.abs(histogramSeconds - input.runningSeconds) > Math.max(1, input.runningSeconds * 0.01)) {
    badRequest(`Invalid input: histogram: the bands add up to ${(histogramSeconds / 60).toFixed(1)} min but the running time is ${(input.runningSeconds / 60).toFixed(1)} min`)
  }
  const bandIds = new Set(type!.overRevBands.map((b) => b.id))
  input.overRevs.forEach((o, i) => {
    if (!bandIds.has(o.bandId)) badRequest(`Invalid input: overRevs.${i}.bandId: ${type!.code} has no over-rev band "${o.bandId}" (bands: ${[...bandIds].join(', ')})`)
  })
  if (Date.parse(input.startedAt) < new Date(engine.built_at).getTime()) badRequest('Invalid input: startedAt: before the engine was built')
  const date = checkSessionDate(input.startedAt, eventDates, new Date())
  if (date.verdict === 'refuse') badRequest(`Invalid input: ${date.message}`)
  if (date.verdict === 'confirm' && !input.confirmDate) conflict(date.message, { field: 'startedAt', confirmField: 'confirmDate', daysOutside: date.daysOutside })
  return { engine, type: type! }
}

export async function insertSession(trx: Knex.Transaction, actor: Actor, input: ManualSessionInput, engine: any, type: { bandWidthRpm: number }, extras: SessionExtras = {}) {
  const [id] = await trx('sessions').insert({
    engine_id: engine.id,
    team_id: engine.team_id,
    event_id: input.eventId,
    kind: input.kind,
    started_at: new Date(input.startedAt),
    running_seconds: input.runningSeconds,
    distance_km: input.distanceKm,
    band_width_rpm: type.bandWidthRpm,
    histogram: JSON.stringify(input.histogram),
    rpm_moments: momentsColumn(extras.rpmMoments),
    over_revs: JSON.stringify(input.overRevs),
    low_oil_pressure: JSON.stringify(extras.lowOilPressure ?? []),
    max_rpm: extras.maxRpm ?? (input.overRevs.length ? Math.max(...input.overRevs.map((o) => o.peakRpm)) : null),
    max_oil_temp_c: extras.maxOilTempC ?? null,
    max_water_temp_c: extras.maxWaterTempC ?? null,
    max_speed_kmh: extras.maxSpeedKmh ?? null,
    min_oil_pressure_bar: extras.minOilPressureBar ?? null,
    source: extras.source ?? 'manual',
    file_key: extras.fileKey ?? null,
    file_name: extras.fileName ?? null,
    file_sha256: extras.fileSha256 ?? null,
    // The owner scope within which a logger file is unique: the running team, else the supplier.
    file_scope_id: engine.team_id ?? engine.supplier_id,
    details: extras.details === undefined ? null : JSON.stringify(extras.details),
    trace_overview: extras.traceOverview === undefined ? null : JSON.stringify(extras.traceOverview),
    created_by: actor.id,
  })
  await audit(trx, actor, {
    entity: 'session',
    entityId: id!,
    action: 'create',
    after: { engineId: engine.id, eventId: input.eventId, kind: input.kind, startedAt: input.startedAt, runningSeconds: input.runningSeconds, distanceKm: input.distanceKm, source: extras.source ?? 'manual', dateConfirmed: input.confirmDate || undefined },
  })
  await bumpLifeRevision(trx)
  return id!
}

export function momentsColumn(m: RpmMoments | null | undefined): Buffer | null {
  if (!m) return null
  const bytes = encodeMoments(m)
  return Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)
}

export async function sessionById(db: Knex | Knex.Transaction, id: number) {
  const row = await db('sessions as s')
    .join('engines as e', 'e.id', 's.engine_id')
    .leftJoin('events as ev', 'ev.id', 's.event_id')
    .leftJoin('users as vu', 'vu.id', 's.voided_by')
    .where('s.id', id)
    .first('s.*', 'e.serial as engine_serial', 'e.supplier_id', 'ev.name as event_name', 'vu.name as voided_by_name')
  return row
}

export async function createManualSession(db: Knex, actor: Actor, input: ManualSessionInput) {
  const session = await db.transaction(async (trx) => {
    const { engine, type } = await checkSession(trx, actor, input, { exactBands: true })
    const id = await insertSession(trx, actor, input, engine, type)
    return toSessionDto(await sessionById(trx, id))
  })
  // After the commit, so the check sees the new session; in the background, so the request does not wait.
  announceLifeChanged()
  return session
}

/** A session with what it cost each part fitted when it ran, how exact that is, and what each over-rev did. */
export async function sessionView(db: Knex, actor: Actor, id: number): Promise<SessionViewDto> {
  const row = await sessionById(db, id)
  if (!row || !canSee(actor, { supplierId: row.supplier_id, teamId: row.team_id })) notFound('Session')
  const engine = await db('engines').where('id', row.engine_id).first()
  const [type] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const componentTypes = new Map((await loadComponentTypes(db)).map((c) => [c.id, c]))
  const fitted = await db('installations as i')
    .join('components as c', 'c.id', 'i.component_id')
    .where('i.engine_id', row.engine_id)
    .where('i.from_at', '<=', row.started_at)
    .where((w) => w.whereNull('i.to_at').orWhere('i.to_at', '>', row.started_at))
    .select('c.id', 'c.serial', 'c.component_type_id', 'c.serial_limits', 'i.position')
  const session = toEngineSession(row)
  const cfg = lifeConfig(type!)
  const exact = session.rpmMoments != null
  const cost: SessionCostDto[] = fitted.map((p) => {
    const ct = componentTypes.get(p.component_type_id)!
    const limits = limitsOf(ct, p)
    const usage = addSession(emptyUsage(), session, cfg, limits)
    const life = evaluatePartLife(usage, limits, cfg)
    const range = exact ? null : histogramEqHoursBounds(session.histogram, session.bandWidthRpm, cfg.referenceRpm, ct.damageExponent)
    return {
      componentId: p.id,
      serial: p.serial,
      position: type!.positions.find((x) => x.position === p.position)?.label ?? p.position,
      typeName: ct.name,
      category: ct.category,
      damageExponent: ct.damageExponent,
      hours: usage.hours,
      km: usage.km,
      eqHours: usage.eqHours,
      eqHoursRange: range && { low: range.low, high: range.high },
      overRevCounts: usage.overRevCounts,
      fraction: life.fraction,
      governing: life.governing,
    }
  })
  const exponents = [...new Set(cost.map((c) => c.damageExponent))].filter((p) => p > 0).sort((a, b) => a - b)
  const overRevDamage = session.overRevs.map((ev) =>
    ev.profile ? exponents.map((p) => ({ exponent: p, ...excursionDamage(ev.profile!, cfg.referenceRpm, cfg.revLimitRpm, p) })) : null,
  )
  const t = type!
  const overRevPeakForceN = session.overRevs.map((ev) => (t.reciprocatingMassKg ? inertiaForceAtRpm(t.strokeMm, t.conrodMm, t.reciprocatingMassKg, ev.peakRpm).tdcN : null))
  const details = json<Record<string, any> | null>(row.details, null)
  return {
    session: toSessionDto(row),
    details: details && { overview: details.overview ?? [], warnings: details.warnings ?? [], skippedRows: details.skippedRows ?? 0, rows: details.rows ?? null, gaps: details.gaps ?? [], gapCount: details.gapCount ?? 0, distanceSource: details.distanceSource ?? null, loggerMetadata: Array.isArray(details.preamble) ? details.preamble : [] },
    chart: sessionChart(row, toSessionDto(row)),
    eqErrorBound: exact ? Math.max(0, ...cost.map((c) => momentsRelativeErrorBound(c.damageExponent))) : null,
    cost,
    overRevDamage,
    overRevPeakForceN,
    engineType: { code: type!.code, revLimitRpm: type!.revLimitRpm, referenceRpm: type!.referenceRpm, overRevBands: type!.overRevBands, bandWidthRpm: type!.bandWidthRpm },
  }
}
