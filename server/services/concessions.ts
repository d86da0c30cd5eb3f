// Releasing a held or over-limit part after inspection: the supplier's concession, recorded with who,
// why, any limit it sets for that serial and the teardown findings it rests on.
import type { Knex } from 'knex'
import { hasSerialLimits, mergeSerialLimits, type SerialLimits } from '#shared/domain/part-state'
import type { LimitMeasure } from '#shared/domain/life'
import type { ConcessionInput } from '#shared/schemas/part'
import type { Actor } from '../utils/guard'
import { canSeePart } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { iso, json, numOrNull } from '../utils/db'
import { bumpLifeRevision } from './fleet-data'
import { fleetLife } from './life'

const FIELD: Record<LimitMeasure['kind'], 'limitHours' | 'limitKm' | 'limitEqHours' | 'limitOverRev'> = { hours: 'limitHours', km: 'limitKm', eqHours: 'limitEqHours', overRev: 'limitOverRev' }

function serialLimitsOf(input: ConcessionInput): SerialLimits {
  const s: SerialLimits = {}
  if (input.limitHours !== undefined) s.hours = input.limitHours
  if (input.limitKm !== undefined) s.km = input.limitKm
  if (input.limitEqHours !== undefined) s.eqHours = input.limitEqHours
  if (input.limitOverRev && Object.keys(input.limitOverRev).length) s.overRevEvents = input.limitOverRev
  return s
}

/** A limit given for a serial must leave the part below it, or the concession would release a part still over. */
function checkNewLimits(serial: string, measures: LimitMeasure[], given: SerialLimits) {
  for (const band of Object.keys(given.overRevEvents ?? {})) {
    if (!measures.some((m) => m.kind === 'overRev' && m.bandId === band)) badRequest(`Invalid input: limitOverRev.${band}: ${serial}'s type has no over-rev limit for band "${band}"`)
  }
  for (const m of measures) {
    const limit = m.kind === 'overRev' ? given.overRevEvents?.[m.bandId!] : m.kind === 'hours' ? given.hours : m.kind === 'km' ? given.km : given.eqHours
    const field = m.kind === 'overRev' ? `${FIELD[m.kind]}.${m.bandId}` : FIELD[m.kind]
    if (limit !== undefined && limit <= m.used) badRequest(`Invalid input: ${field}: ${serial} has used ${m.used.toFixed(m.unit === 'events' ? 0 : 2)} ${m.unit}; a new limit must be above that`)
    if (limit === undefined && m.fraction >= 1) badRequest(`Invalid input: ${field}: ${serial} is at ${Math.round(m.fraction * 100)} % of its ${m.label.toLowerCase()} limit; give a new limit for this serial to release it`)
  }
}

export async function grantConcession(db: Knex, actor: Actor, componentId: number, input: ConcessionInput) {
  // Life as it stands before the release, from the shared fleet computation (read outside the write).
  const before = (await fleetLife(db)).parts.get(componentId)
  return db.transaction(async (trx) => {
    const comp = await trx('components').where('id', componentId).forUpdate().first()
    if (!comp) notFound('Part')
    const current = await trx('installations as i').join('engines as e', 'e.id', 'i.engine_id').where('i.component_id', componentId).whereNull('i.to_at').first('e.team_id')
    if (!canSeePart(actor, { supplierId: comp.supplier_id, currentTeamId: current?.team_id ?? null })) notFound('Part')
    if (comp.status === 'scrapped') conflict(`${comp.serial} is scrapped: a scrapped part is never released`)
    const overLimit = (before?.fraction ?? 0) >= 1
    if (comp.status !== 'quarantined' && !overLimit) conflict(`${comp.serial} is ${comp.status} and within its limits: there is nothing to release`)
    const given = serialLimitsOf(input)
    checkNewLimits(comp.serial, before?.measures ?? [], given)
    const findings = input.findingIds.length ? await trx('teardown_findings').whereIn('id', input.findingIds).select('id', 'component_id') : []
    for (const id of input.findingIds) {
      const f = findings.find((x) => x.id === id)
      if (!f || f.component_id !== componentId) badRequest(`Invalid input: findingIds: finding ${id} is not a teardown finding on ${comp.serial}`)
    }
    const at = new Date()
    const statusAfter = comp.status === 'quarantined' ? 'serviceable' : comp.status
    const serialLimits = hasSerialLimits(given) ? mergeSerialLimits(json<SerialLimits | null>(comp.serial_limits, null), given) : json<SerialLimits | null>(comp.serial_limits, null)
    const [id] = await trx('part_concessions').insert({
      component_id: componentId,
      granted_by: actor.id,
      granted_at: at,
      reason: input.reason,
      status_before: comp.status,
      status_after: statusAfter,
      fraction_before: before ? Math.min(before.fraction, 9999) : null,
      limit_hours: given.hours ?? null,
      limit_km: given.km ?? null,
      limit_eq_hours: given.eqHours ?? null,
      limit_over_rev: given.overRevEvents ? JSON.stringify(given.overRevEvents) : null,
      finding_ids: JSON.stringify(input.findingIds),
    })
    // The inspection the concession rests on clears earlier over-revs' inspection flag, as a signed-off rebuild does.
    await trx('components').where('id', componentId).update({ status: statusAfter, serial_limits: serialLimits ? JSON.stringify(serialLimits) : null, inspection_cleared_at: at })
    await audit(trx, actor, {
      entity: 'component',
      entityId: componentId,
      action: 'concession',
      before: { serial: comp.serial, status: comp.status, serialLimits: json(comp.serial_limits, null), fraction: before?.fraction ?? null },
      after: { status: statusAfter, serialLimits, reason: input.reason, findingIds: input.findingIds, concession: id },
    })
    await bumpLifeRevision(trx)
    return { id: id!, componentId, serial: comp.serial, statusBefore: comp.status, statusAfter, grantedAt: at.toISOString(), serialLimits }
  })
}

/** The concessions of one part, oldest first, with the findings each rests on (the caller has checked the part is visible). */
export async function concessionsOf(db: Knex, componentId: number) {
  const rows = await db('part_concessions as c').join('users as u', 'u.id', 'c.granted_by').where('c.component_id', componentId).orderBy('c.granted_at').select('c.*', 'u.name as granted_by_name')
  const ids = [...new Set(rows.flatMap((r) => json<number[]>(r.finding_ids, [])))]
  const findings = ids.length ? await db('teardown_findings').whereIn('id', ids).select('id', 'teardown_id', 'condition', 'note', 'disposition') : []
  return rows.map((r) => ({
    id: r.id,
    grantedAt: iso(r.granted_at)!,
    grantedByName: r.granted_by_name as string,
    reason: r.reason as string,
    statusBefore: r.status_before as string,
    statusAfter: r.status_after as string,
    fractionBefore: numOrNull(r.fraction_before),
    limits: { hours: numOrNull(r.limit_hours), km: numOrNull(r.limit_km), eqHours: numOrNull(r.limit_eq_hours), overRevEvents: json<Record<string, number> | null>(r.limit_over_rev, null) },
    findings: json<number[]>(r.finding_ids, []).map((fid) => findings.find((f) => f.id === fid)).filter(Boolean).map((f) => ({ id: f.id, teardownId: f.teardown_id, condition: f.condition, note: f.note ?? null, disposition: f.disposition })),
  }))
}
