// Part swaps during a teardown, with what the fitted part can run before the next event.
import type { Knex } from 'knex'
import { z } from 'zod'
import { REMOVAL_STATES, suggestRemovalState, type RemovalState } from '#shared/domain/part-state'
import { forecastPart, recentDuty, type PlannedEvent } from '#shared/domain/forecast'
import { addSession, emptyUsage, evaluatePartLife, sessionsForComponent } from '#shared/domain/life'
import type { SwapSchema } from '#shared/schemas/teardown'
import type { EngineTypeDto } from '#shared/types/fleet'
import type { Actor } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest, conflict } from '../../utils/errors'
import { iso } from '../../utils/db'
import { fitPart, removePart } from '../builds'
import { lifeConfig, limitsOf, loadComponentTypes, loadEngineTypes, toInstallation } from '../fleet-data'
import { loadSessionUsage } from '../session-usage'
import { teardownFor, assertOpen, FALLBACK_SECONDS_PER_EVENT, type Db } from './common'

async function nextEventFor(db: Db, engine: any, type: EngineTypeDto, now: Date): Promise<PlannedEvent & { assigned: boolean } | null> {
  const assigned = await db('event_plans as p').join('events as ev', 'ev.id', 'p.event_id').where('p.engine_id', engine.id).where('ev.ends_at', '>', now).orderBy('ev.starts_at').first('ev.*', 'p.planned_seconds as plan_seconds', 'p.planned_km as plan_km')
  const ev = assigned ?? (await db('events').where({ series: type.series }).where('ends_at', '>', now).orderBy('starts_at').first())
  if (!ev) return null
  const seconds = assigned?.plan_seconds ?? ev.planned_seconds ?? null
  const km = assigned?.plan_km ?? ev.planned_km ?? null
  return { eventId: ev.id, name: ev.name, startsAt: iso(ev.starts_at)!, plannedSeconds: seconds, plannedKm: km === null ? null : Number(km), assigned: Boolean(assigned) }
}

/** Whether a part has life left for the engine's next event, projected with the engine's recent duty. */
export async function projectForNextEvent(trx: Db, engine: any, componentId: number) {
  const now = new Date()
  const [et] = await loadEngineTypes(trx, (qb) => qb.where('id', engine.engine_type_id))
  const comp = await trx('components').where('id', componentId).first()
  const [ct] = await loadComponentTypes(trx, (qb) => qb.where('id', comp.component_type_id))
  const ev = await nextEventFor(trx, engine, et!, now)
  if (!ev) return { ok: true, event: null, fractionAfter: null, message: null }
  const cfg = lifeConfig(et!)
  const limits = limitsOf(ct!, comp)
  // The part's own life, straight from its installations and sessions (never a stale cache).
  const partInst = (await trx('installations').where('component_id', componentId)).map(toInstallation)
  const engineIds = [...new Set([engine.id, ...partInst.map((i) => i.engineId)])]
  const allSessions = await loadSessionUsage(trx, (qb) => qb.whereIn('s.engine_id', engineIds))
  let usage = emptyUsage()
  for (const s of sessionsForComponent(componentId, partInst, allSessions) as typeof allSessions) {
    usage = addSession(usage, s, s.bandWidthRpm === cfg.bandWidthRpm ? cfg : { ...cfg, bandWidthRpm: s.bandWidthRpm }, limits, { inspectionClearedAt: iso(comp.inspection_cleared_at) })
  }
  const life = evaluatePartLife(usage, limits, cfg)
  const sessions = allSessions.filter((s) => s.engineId === engine.id)
  const perEvent = new Map<number, number>()
  for (const s of sessions) if (s.eventId !== null) perEvent.set(s.eventId, (perEvent.get(s.eventId) ?? 0) + s.runningSeconds)
  const mean = perEvent.size ? [...perEvent.values()].reduce((a, b) => a + b, 0) / perEvent.size : null
  const fc = forecastPart(usage, limits, cfg, [ev], recentDuty(sessions, 10), { defaultSecondsPerEvent: mean ?? FALLBACK_SECONDS_PER_EVENT })
  const after = fc.fractionAfter[0]?.fraction ?? life.fraction
  const ok = !fc.alreadyOver && fc.limitAt === null
  const message = ok
    ? null
    : `${comp.serial} is projected at ${(after * 100).toFixed(0)} % of its life limit after ${ev.name}${ev.assigned ? '' : ' (the next event of its series)'}; ${(life.fraction * 100).toFixed(0)} % used now`
  return { ok, event: ev, fractionAfter: after, message }
}

const RANK: Record<RemovalState, number> = { serviceable: 0, quarantined: 1, scrapped: 2 }

export async function swapPart(trx: Knex.Transaction, actor: Actor, teardownId: number, input: z.infer<typeof SwapSchema>) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  assertOpen(td)
  const current = await trx('installations').where({ engine_id: engine.id, position: input.position }).whereNull('to_at').first()
  const at = new Date()
  let removedStatus: RemovalState | null = null
  if (current) {
    const removed = await trx('components').where('id', current.component_id).first('serial')
    // The state a part leaves in decides whether it can run again, so it is always asked for, never assumed.
    if (!input.removedDisposition) badRequest(`Invalid input: removedDisposition: say what state ${removed.serial} leaves the engine in: ${REMOVAL_STATES.join(', ')}`)
    removedStatus = input.removedDisposition
    // A finding already decided the part is held or scrapped: the swap may not send it back to the shelf.
    const finding = await trx('teardown_findings').where({ teardown_id: td.id, component_id: current.component_id }).orderBy('id', 'desc').first('disposition')
    const held = suggestRemovalState({ findingDisposition: finding?.disposition ?? null, engineInspectionOpen: false, partInspectionOpen: false, fraction: 0 })
    if (RANK[removedStatus] < RANK[held.state]) conflict(`Invalid input: removedDisposition: ${removed.serial} cannot leave as ${removedStatus}: ${held.reasons.join('; ')}`)
    await removePart(trx, actor, current.id, { at: at.toISOString(), status: removedStatus })
  }
  // fitPart refuses a wrong type (400), a part fitted elsewhere or not serviceable (409); the transaction undoes the removal.
  const fitted = await fitPart(trx, actor, engine.id, { position: input.position, serial: input.serial, at: at.toISOString() })
  const part = await trx('components').where('serial', input.serial).first('id')
  const projection = await projectForNextEvent(trx, engine, part.id)
  if (!projection.ok && !input.overrideReason) {
    conflict(`Invalid input: overrideReason: ${projection.message}. Choose another part, or give overrideReason to fit it anyway`, { lifeWarning: projection.message, needsOverride: true })
  }
  const [id] = await trx('teardown_swaps').insert({
    teardown_id: td.id,
    position: input.position,
    removed_installation_id: current?.id ?? null,
    fitted_installation_id: fitted.id,
    removed_status: removedStatus,
    reason: input.reason,
    life_warning: projection.ok ? null : projection.message,
    override_reason: projection.ok ? null : input.overrideReason,
    swapped_by: actor.id,
    at,
  })
  const removedSerial = current ? (await trx('components').where('id', current.component_id).first('serial')).serial : null
  await audit(trx, actor, {
    entity: 'teardown_swap',
    entityId: id!,
    action: 'swap',
    before: current ? { serial: removedSerial, position: input.position } : undefined,
    after: { teardown: td.id, engine: engine.serial, position: input.position, fitted: input.serial, removedStatus, reason: input.reason, lifeWarning: projection.ok ? null : projection.message, overrideReason: projection.ok ? null : input.overrideReason },
  })
  return { id: id!, position: input.position, removedSerial, removedStatus, fittedSerial: input.serial, lifeWarning: projection.ok ? null : projection.message, overrideReason: projection.ok ? null : (input.overrideReason ?? null), at: at.toISOString() }
}
