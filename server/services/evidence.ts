// Field evidence per part type: every part's life with its outcome, the supplier engineer's
// classification of findings as failure modes, and the Weibull analysis per mode.
import type { Knex } from 'knex'
import { addSession, emptyUsage, sessionsForComponent, type EngineTypeLifeConfig, type PartUsage, type SessionUsage } from '#shared/domain/life'
import { evidenceByMode, MEASURE_LABELS, MEASURE_UNITS, NOT_A_FAILURE, type EvidenceMeasure, type EvidencePart, type LifeFigures } from '#shared/domain/evidence'
import { CONFIDENCE, MIN_FAILURES } from '#shared/domain/weibull'
import type { Actor } from '../utils/guard'
import { canWriteCatalogue, scopeCatalogue } from '../utils/guard'
import { audit } from '../utils/audit'
import { notFound } from '../utils/errors'
import { iso } from '../utils/db'
import { lifeConfig, limitsOf, loadComponentTypes, loadEngineTypes, toInstallation } from './fleet-data'
import { loadSessionUsage } from './session-usage'

function figures(u: PartUsage): LifeFigures {
  return { hours: u.hours, eqHours: u.eqHours, km: u.km, overRev: Object.values(u.overRevCounts).reduce((s, n) => s + n, 0) }
}

type Db = Knex | Knex.Transaction

/** Everything the analysis of one part type reads, scoped to the actor's supplier. */
async function loadEvidenceRows(db: Db, actor: Actor, componentTypeId: number) {
  const [ct] = await loadComponentTypes(db, (qb) => scopeCatalogue(qb, actor).where('id', componentTypeId))
  if (!ct) notFound('Part type')
  // a part type is one supplier's, and so are its parts
  const components = await db('components').where('component_type_id', ct.id).orderBy('serial').select('id', 'serial', 'status')
  const ids = components.map((c) => c.id)
  const installRows = ids.length ? await db('installations as i').join('engines as e', 'e.id', 'i.engine_id').whereIn('i.component_id', ids).orderBy('i.from_at').select('i.*', 'e.engine_type_id') : []
  const engineIds = [...new Set(installRows.map((r) => r.engine_id))]
  const sessions = engineIds.length ? await loadSessionUsage(db, (qb) => qb.whereIn('s.engine_id', engineIds)) : []
  const findings = ids.length
    ? await db('teardown_findings as f')
        .join('teardowns as t', 't.id', 'f.teardown_id')
        .join('engines as e', 'e.id', 't.engine_id')
        .leftJoin('finding_failure_modes as m', 'm.finding_id', 'f.id')
        .leftJoin('users as u', 'u.id', 'm.classified_by')
        .whereIn('f.component_id', ids)
        .orderBy('t.opened_at')
        .select('f.id', 'f.component_id', 'f.teardown_id', 'f.condition', 'f.disposition', 'f.note', 't.opened_at', 'e.serial as engine_serial', 'm.failure_mode', 'm.classified_at', 'u.name as classified_by_name')
    : []
  const engineTypes = new Map((await loadEngineTypes(db, (qb) => qb.whereIn('id', [...new Set(installRows.map((r) => r.engine_type_id))]))).map((t) => [t.id, lifeConfig(t)]))
  return { ct, components, installRows, sessions, findings, engineTypes }
}

/** The life of each part at its last removal (or today) and at each of its findings. */
function partsWithLife(rows: Awaited<ReturnType<typeof loadEvidenceRows>>) {
  const { ct, components, installRows, sessions, findings, engineTypes } = rows
  const limits = limitsOf(ct)
  const installations = installRows.map(toInstallation)
  const findingsOf = new Map<number, typeof findings>()
  for (const f of findings) findingsOf.set(f.component_id, [...(findingsOf.get(f.component_id) ?? []), f])
  const findingLife = new Map<number, LifeFigures>()

  const parts: (EvidencePart & { status: string; removedAt: string | null; sessions: number; approximate: boolean })[] = components.map((c) => {
    const mine = installRows.filter((r) => r.component_id === c.id)
    const last = mine[mine.length - 1]
    const cfg: EngineTypeLifeConfig | undefined = last ? engineTypes.get(last.engine_type_id) : undefined
    const runs = (cfg ? sessionsForComponent(c.id, installations, sessions) : []) as (SessionUsage & { bandWidthRpm: number })[]
    const own = findingsOf.get(c.id) ?? []
    let usage = emptyUsage()
    let next = 0
    for (const s of runs) {
      // a finding is made at a teardown, after the running before it
      while (next < own.length && new Date(own[next]!.opened_at) <= new Date(s.at)) findingLife.set(own[next++]!.id, figures(usage))
      usage = addSession(usage, s, s.bandWidthRpm === cfg!.bandWidthRpm ? cfg! : { ...cfg!, bandWidthRpm: s.bandWidthRpm }, limits)
    }
    while (next < own.length) findingLife.set(own[next++]!.id, figures(usage))
    const running = mine.some((r) => r.to_at === null)
    return {
      componentId: c.id,
      serial: c.serial,
      status: c.status,
      life: figures(usage),
      running,
      removedAt: running || !last ? null : iso(last.to_at),
      sessions: runs.length,
      approximate: runs.some((s) => !s.exact && !s.rpmMoments),
      findings: own.map((f) => ({ findingId: f.id, life: findingLife.get(f.id)!, failureMode: f.failure_mode ?? null })),
    }
  })
  return { parts, findingLife }
}

function limitFor(ct: { limitHours: number | null; limitKm: number | null; limitEqHours: number | null }, measure: EvidenceMeasure): number | null {
  // over-rev limits are per band, so no single line is drawn for the total count
  return measure === 'hours' ? ct.limitHours : measure === 'km' ? ct.limitKm : measure === 'eqHours' ? ct.limitEqHours : null
}

export async function partTypeEvidence(db: Knex, actor: Actor, componentTypeId: number, query: { measure: EvidenceMeasure }) {
  const rows = await loadEvidenceRows(db, actor, componentTypeId)
  const { ct, findings } = rows
  const { parts, findingLife } = partsWithLife(rows)
  const measure = query.measure
  const serialOf = new Map(parts.map((p) => [p.componentId, p.serial]))
  return {
    componentType: { id: ct.id, code: ct.code, name: ct.name, category: ct.category },
    measure,
    unit: MEASURE_UNITS[measure],
    measureLabel: MEASURE_LABELS[measure],
    limit: limitFor(ct, measure),
    minFailures: MIN_FAILURES,
    confidence: CONFIDENCE,
    approximate: measure === 'eqHours' && parts.some((p) => p.approximate),
    modes: evidenceByMode(parts, measure),
    parts: parts.map((p) => ({ componentId: p.componentId, serial: p.serial, status: p.status, running: p.running, removedAt: p.removedAt, sessions: p.sessions, life: p.life })),
    findings: findings.map((f) => ({
      findingId: f.id,
      teardownId: f.teardown_id,
      componentId: f.component_id,
      serial: serialOf.get(f.component_id)!,
      engineSerial: f.engine_serial,
      at: iso(f.opened_at)!,
      condition: f.condition,
      disposition: f.disposition,
      note: f.note ?? null,
      failureMode: f.failure_mode ?? null,
      classifiedAt: iso(f.classified_at),
      classifiedByName: f.classified_by_name ?? null,
      life: findingLife.get(f.id)!,
    })),
    unclassified: findings.filter((f) => !f.failure_mode).length,
  }
}

/** Sets (or takes back, with null) the failure mode of a finding on one of the supplier's parts; audited. */
export async function classifyFinding(trx: Knex.Transaction, actor: Actor, findingId: number, input: { failureMode: string | null }) {
  const f = await trx('teardown_findings as f')
    .join('components as c', 'c.id', 'f.component_id')
    .where('f.id', findingId)
    .forUpdate()
    .first('f.id', 'f.condition', 'f.disposition', 'c.serial', 'c.supplier_id')
  if (!f || !canWriteCatalogue(actor, f.supplier_id)) notFound('Finding')
  const before = await trx('finding_failure_modes').where('finding_id', f.id).first()
  const now = new Date()
  if (input.failureMode === null) await trx('finding_failure_modes').where('finding_id', f.id).delete()
  else if (before) await trx('finding_failure_modes').where('finding_id', f.id).update({ failure_mode: input.failureMode, classified_by: actor.id, classified_at: now })
  else await trx('finding_failure_modes').insert({ finding_id: f.id, failure_mode: input.failureMode, classified_by: actor.id, classified_at: now })
  await audit(trx, actor, {
    entity: 'teardown_finding',
    entityId: f.id,
    action: 'classify-failure-mode',
    before: { serial: f.serial, condition: f.condition, disposition: f.disposition, failureMode: before?.failure_mode ?? null },
    after: { failureMode: input.failureMode },
  })
  return { findingId: f.id, failureMode: input.failureMode, isFailure: input.failureMode !== null && input.failureMode !== NOT_A_FAILURE }
}
