// Back-to-birth history of parts and per-engine chart series, derived from sessions and installations.
import type { Knex } from 'knex'
import { addSession, emptyUsage, evaluatePartLife, sessionsForComponent, type EngineSession } from '#shared/domain/life'
import type { Actor } from '../utils/guard'
import { canSee, canSeePart } from '../utils/guard'
import { notFound } from '../utils/errors'
import { iso, json } from '../utils/db'
import { hasSerialLimits, mergeSerialLimits, withSerialLimits, type SerialLimits } from '#shared/domain/part-state'
import { concessionsOf } from './concessions'
import { lifeConfig, limitsOf, loadComponentTypes, loadEngineTypes, toInstallation } from './fleet-data'
import { loadSessionUsage } from './session-usage'
import { fleetLife } from './life'

async function sessionsOfEngines(db: Knex, engineIds: number[]) {
  if (!engineIds.length) return []
  return loadSessionUsage(db, (qb) => qb.whereIn('s.engine_id', engineIds))
}

/** Cumulative life after each session; each session is read with the band width it was binned at. */
function timelineFor(sessions: (EngineSession & { bandWidthRpm: number })[], cfg: ReturnType<typeof lifeConfig>, limits: ReturnType<typeof limitsOf>, limitsAt: (at: string) => ReturnType<typeof limitsOf> = () => limits) {
  let usage = emptyUsage()
  return sessions.map((s) => {
    usage = addSession(usage, s, s.bandWidthRpm === cfg.bandWidthRpm ? cfg : { ...cfg, bandWidthRpm: s.bandWidthRpm }, limits)
    // Each point is read against the limits that applied when the session ran (a concession's serial limit from its date on).
    const life = evaluatePartLife(usage, limitsAt(s.at), cfg)
    return { at: s.at, fraction: life.fraction, status: life.status }
  })
}

export async function partHistory(db: Knex, actor: Actor, componentId: number) {
  const comp = await db('components').where('id', componentId).first()
  if (!comp) notFound('Part')
  const installRows = await db('installations as i').join('engines as e', 'e.id', 'i.engine_id').where('i.component_id', componentId).orderBy('i.from_at').select('i.*', 'e.serial as engine_serial', 'e.team_id', 'e.supplier_id', 'e.engine_type_id')
  const current = installRows.find((r) => r.to_at === null)
  // A team sees a part while it sits in one of its engines; the supplier sees all of its parts.
  if (!canSeePart(actor, { supplierId: comp.supplier_id, currentTeamId: current?.team_id ?? null })) notFound('Part')

  const life = (await fleetLife(db)).parts.get(componentId)
  const [componentType] = await loadComponentTypes(db, (qb) => qb.where('id', comp.component_type_id))
  const engineTypeId = current?.engine_type_id ?? installRows[installRows.length - 1]?.engine_type_id
  const [engineType] = engineTypeId ? await loadEngineTypes(db, (qb) => qb.where('id', engineTypeId)) : []

  const installations = installRows.map(toInstallation)
  const allSessions = await sessionsOfEngines(db, [...new Set(installRows.map((r) => r.engine_id))])
  const mine = sessionsForComponent(componentId, installations, allSessions) as (EngineSession & { bandWidthRpm: number; eventId: number | null })[]
  const visibleEngine = new Map(installRows.map((r) => [r.engine_id, canSee(actor, { supplierId: r.supplier_id, teamId: r.team_id })]))
  const serialOf = new Map(installRows.map((r) => [r.engine_id, r.engine_serial]))
  const eventNames = new Map(
    (await db('events').whereIn('id', [...new Set(mine.map((s) => s.eventId).filter((x): x is number => x !== null))]).select('id', 'name')).map((e) => [e.id, e.name]),
  )
  const kinds = new Map((await db('sessions').whereIn('id', mine.map((s) => s.sessionId)).select('id', 'kind')).map((r) => [r.id, r.kind]))

  const concessions = await concessionsOf(db, componentId)
  // Teardown findings on this part, for a concession to rest on; only those from engines the actor may see.
  const findingRows = await db('teardown_findings as f').join('teardowns as t', 't.id', 'f.teardown_id').join('engines as e', 'e.id', 't.engine_id').where('f.component_id', componentId).orderBy('f.id').select('f.id', 'f.teardown_id', 'f.condition', 'f.disposition', 'f.note', 'f.created_at', 'e.serial as engine_serial', 'e.supplier_id', 'e.team_id')
  const findings = findingRows
    .filter((f) => canSee(actor, { supplierId: f.supplier_id, teamId: f.team_id }))
    .map((f) => ({ id: f.id, teardownId: f.teardown_id, engineSerial: f.engine_serial, condition: f.condition, disposition: f.disposition, note: f.note ?? null, at: iso(f.created_at) }))
  const limitSteps: { at: number; serial: SerialLimits }[] = []
  let serial: SerialLimits | null = null
  for (const c of concessions) {
    const given = { hours: c.limits.hours ?? undefined, km: c.limits.km ?? undefined, eqHours: c.limits.eqHours ?? undefined, overRevEvents: c.limits.overRevEvents ?? undefined }
    if (!hasSerialLimits(given)) continue
    serial = mergeSerialLimits(serial, given)
    limitSteps.push({ at: Date.parse(c.grantedAt), serial })
  }
  const limitsAt = (at: string) => withSerialLimits(limitsOf(componentType!), limitSteps.filter((st) => st.at <= Date.parse(at)).at(-1)?.serial ?? null)
  const timeline = engineType && componentType ? timelineFor(mine, lifeConfig(engineType), limitsOf(componentType, comp), limitsAt) : []

  return {
    part: {
      ...(life ?? {}),
      componentId,
      serial: comp.serial,
      componentTypeId: comp.component_type_id,
      typeName: componentType?.name ?? '',
      category: componentType?.category ?? '',
      componentStatus: comp.status,
      batch: comp.batch ?? null,
      bornAt: iso(comp.born_at),
      engineId: current?.engine_id ?? null,
      engineSerial: current?.engine_serial ?? null,
      position: current?.position ?? null,
      serialLimits: json<SerialLimits | null>(comp.serial_limits, null),
    },
    concessions,
    findings,
    // Installations in another team's engines are shown without naming that engine.
    installations: installRows.map((r) => ({
      engineId: visibleEngine.get(r.engine_id) ? r.engine_id : null,
      engineSerial: visibleEngine.get(r.engine_id) ? r.engine_serial : 'another engine',
      position: r.position,
      from: iso(r.from_at),
      to: iso(r.to_at),
      removedStatus: r.removed_status ?? null,
    })),
    sessions: mine
      .filter((s) => visibleEngine.get(s.engineId))
      .map((s) => ({
        id: s.sessionId,
        at: s.at,
        engineSerial: serialOf.get(s.engineId),
        kind: kinds.get(s.sessionId),
        runningSeconds: s.runningSeconds,
        distanceKm: s.distanceKm,
        eventName: s.eventId ? (eventNames.get(s.eventId) ?? null) : null,
      })),
    timeline: timeline.map((t) => ({ at: t.at, fraction: t.fraction, status: t.status })),
  }
}

/** Chart series for the engine page: worst life per component group over time, rev histogram, over-rev timeline. */
export async function engineCharts(db: Knex, engineId: number) {
  const engine = await db('engines').where('id', engineId).first()
  const [engineType] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const componentTypes = new Map((await loadComponentTypes(db)).map((c) => [c.id, c]))
  const open = await db('installations as i').join('components as c', 'c.id', 'i.component_id').where('i.engine_id', engineId).whereNull('i.to_at').select('i.component_id', 'c.component_type_id', 'c.serial_limits')
  const componentIds = open.map((r) => r.component_id)
  const installations = componentIds.length ? (await db('installations').whereIn('component_id', componentIds)).map(toInstallation) : []
  const sessions = await sessionsOfEngines(db, [...new Set([engineId, ...installations.map((i) => i.engineId)])])
  const cfg = lifeConfig(engineType!)

  const groups = new Map<string, Map<string, number>>()
  for (const r of open) {
    const ct = componentTypes.get(r.component_type_id)!
    const series = timelineFor(sessionsForComponent(r.component_id, installations, sessions) as any, cfg, limitsOf(ct, r))
    let g = groups.get(ct.category)
    if (!g) groups.set(ct.category, (g = new Map()))
    for (const p of series) g.set(p.at, Math.max(g.get(p.at) ?? 0, p.fraction))
  }

  const own = sessions.filter((s) => s.engineId === engineId)
  const histogram: number[] = []
  for (const s of own) {
    // Sessions binned at another width are re-read onto the current bands by their midpoints.
    s.histogram.forEach((sec, i) => {
      const band = s.bandWidthRpm === cfg.bandWidthRpm ? i : Math.floor(((i + 0.5) * s.bandWidthRpm) / cfg.bandWidthRpm)
      histogram[band] = (histogram[band] ?? 0) + sec
    })
  }
  return {
    lifeOverTime: [...groups.entries()].map(([category, points]) => ({
      category,
      points: [...points.entries()].sort((a, b) => a[0].localeCompare(b[0])).map(([at, fraction]) => ({ at, fraction })),
    })),
    histogram: { bandWidthRpm: cfg.bandWidthRpm, seconds: Array.from(histogram, (x) => x ?? 0) },
    overRevs: own.flatMap((s) => s.overRevs.map((o) => ({ at: s.at, sessionId: s.sessionId, bandId: o.bandId, peakRpm: o.peakRpm, durationS: o.durationS }))),
    revLimitRpm: engineType!.revLimitRpm,
    overRevBands: engineType!.overRevBands,
  }
}
