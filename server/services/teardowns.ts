// Teardown and rebuild: measurement sheet, findings, photos, part swaps, sign-off and wear trends.
// Every write runs in one transaction and lands in the audit log; anything that changes what an
// engine may run bumps the life revision so the cached fleet life is recomputed.
import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import { z } from 'zod'
import { forecastPart, recentDuty, type PlannedEvent } from '#shared/domain/forecast'
import { addSession, emptyUsage, evaluatePartLife, sessionsForComponent } from '#shared/domain/life'
import { TEARDOWN_NOTICE, hoursToLimit, judge, plausibleRange, wearTrend, type Characteristic } from '#shared/domain/teardown'
import type { Disposition } from '#shared/domain/teardown'
import type { FindingSchema, FindingUpdateSchema, MeasurementSchema, SignOffSchema, SwapSchema, TeardownStartSchema } from '#shared/schemas/teardown'
import type { ComponentTypeDto, EngineTypeDto } from '#shared/types/fleet'
import type { Actor } from '../utils/guard'
import { canSee } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, forbidden, notFound } from '../utils/errors'
import { iso, num } from '../utils/db'
import { fitPart, removePart } from './builds'
import { bumpLifeRevision, lifeConfig, limitsOf, loadComponentTypes, loadEngineTypes, toInstallation } from './fleet-data'
import { loadSessionUsage } from './session-usage'
import { engineRowFor } from './fleet-scope'
import { fleetLife } from './life'

type Db = Knex | Knex.Transaction
const FALLBACK_SECONDS_PER_EVENT = 3 * 3600

/** Where a removed part goes, from the finding's disposition (no finding: back to the shelf). */
export function statusForDisposition(d: Disposition | null): 'serviceable' | 'quarantined' | 'scrapped' {
  if (d === 'scrap') return 'scrapped'
  if (d === 'quarantine' || d === 'send-to-lab') return 'quarantined'
  return 'serviceable'
}

const fmt = (v: number) => String(Number(v.toPrecision(8)))

/** A teardown the actor may see (another team's answers 404), with its engine row. */
async function teardownFor(db: Db, actor: Actor, id: number, opts: { forUpdate?: boolean } = {}) {
  const qb = db('teardowns').where('id', id)
  if (opts.forUpdate) qb.forUpdate()
  const td = await qb.first()
  if (!td) notFound('Teardown')
  const engine = await db('engines').where('id', td.engine_id).first()
  if (!engine || !canSee(actor, { supplierId: engine.supplier_id, teamId: engine.team_id })) notFound('Teardown')
  return { td, engine }
}

function assertOpen(td: any) {
  if (td.state === 'signed off') conflict(`Teardown ${td.id} is signed off: nothing can be changed`)
  if (td.state !== 'open') conflict(`Teardown ${td.id} is awaiting sign-off: reopen it to change it`)
}

/** Parts that belong to this teardown: fitted now, or removed during it. */
async function teardownParts(db: Db, td: any) {
  const open = await db('installations').where('engine_id', td.engine_id).whereNull('to_at')
  const removed = await db('teardown_swaps as s').join('installations as i', 'i.id', 's.removed_installation_id').where('s.teardown_id', td.id).select('i.*')
  return { open, removed }
}

async function partInTeardown(db: Db, td: any, engine: any, componentId: number) {
  const { open, removed } = await teardownParts(db, td)
  const inst = open.find((i: any) => i.component_id === componentId) ?? removed.find((i: any) => i.component_id === componentId)
  if (!inst) badRequest(`Invalid input: componentId: part ${componentId} is not part of ${engine.serial}'s build in this teardown`)
  const comp = await db('components').where('id', componentId).first()
  const [ct] = await loadComponentTypes(db, (qb) => qb.where('id', comp.component_type_id))
  const [et] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const pos = et!.positions.find((p) => p.position === inst.position)
  return { inst, comp, ct: ct!, label: pos?.label ?? inst.position }
}

// ---------------------------------------------------------------- start

export async function startTeardown(trx: Knex.Transaction, actor: Actor, input: z.infer<typeof TeardownStartSchema>) {
  const engine = await engineRowFor(trx, actor, input.engineId, { forUpdate: true })
  if (engine.status === 'retired') conflict(`${engine.serial} is retired`)
  const openOne = await trx('teardowns').where('engine_id', engine.id).whereNot('state', 'signed off').first('id')
  if (openOne) conflict(`${engine.serial} already has teardown ${openOne.id} open`)
  if (engine.status === 'teardown') conflict(`${engine.serial} is already in teardown`)
  const now = new Date()
  const [id] = await trx('teardowns').insert({ engine_id: engine.id, reason: input.reason, opened_by: actor.id, opened_at: now, state: 'open', note: input.note })
  await trx('engines').where('id', engine.id).update({ status: 'teardown', location: 'teardown' })
  await audit(trx, actor, { entity: 'teardown', entityId: id!, action: 'open', after: { engine: engine.serial, reason: input.reason, at: now.toISOString() } })
  await audit(trx, actor, { entity: 'engine', entityId: engine.id, action: 'teardown', before: { status: engine.status, location: engine.location }, after: { status: 'teardown', location: 'teardown' } })
  await bumpLifeRevision(trx)
  return { id: id!, engineId: engine.id, state: 'open' as const }
}

// ---------------------------------------------------------------- measurements

function convertUnit(value: number, from: string, to: string, c: Characteristic): number {
  if (from === to) return value
  if (from === 'um' && to === 'mm') return value / 1000
  if (from === 'mm' && to === 'um') return value * 1000
  badRequest(`Invalid input: unit: ${c.label} is measured in ${to}; a value in ${from} cannot be converted`)
}

export async function recordMeasurement(trx: Knex.Transaction, actor: Actor, teardownId: number, input: z.infer<typeof MeasurementSchema>) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  assertOpen(td)
  const { comp, ct, label } = await partInTeardown(trx, td, engine, input.componentId)
  const c = (ct.characteristics as Characteristic[]).find((x) => x.key === input.key)
  if (!c) badRequest(`Invalid input: key: ${ct.name} has no characteristic "${input.key}" (it has ${ct.characteristics.map((x) => x.key).join(', ') || 'none'})`)
  const value = convertUnit(input.value, input.unit ?? c.unit, c.unit, c)
  const { verdict } = judge(value, c)
  if (verdict === 'implausible') {
    const r = plausibleRange(c)
    badRequest(`Invalid input: value: ${fmt(value)} ${c.unit} is outside the plausible range ${fmt(r.min)} to ${fmt(r.max)} ${c.unit} for ${c.label} of ${label} (${comp.serial}); check the reading`)
  }
  const at = new Date()
  const before = await trx('teardown_measurements').where({ teardown_id: td.id, component_id: comp.id, characteristic_key: c.key }).first()
  const row = { value, unit: c.unit, verdict, measured_by: actor.id, at }
  let id: number
  if (before) {
    await trx('teardown_measurements').where('id', before.id).update(row)
    id = before.id
  } else {
    ;[id] = (await trx('teardown_measurements').insert({ teardown_id: td.id, component_id: comp.id, characteristic_key: c.key, ...row })) as [number]
  }
  await audit(trx, actor, {
    entity: 'teardown_measurement',
    entityId: id,
    action: before ? 'update' : 'record',
    before: before ? { value: num(before.value), verdict: before.verdict } : undefined,
    after: { teardown: td.id, serial: comp.serial, key: c.key, value, unit: c.unit, verdict },
  })
  return { id, componentId: comp.id, key: c.key, value, unit: c.unit, verdict, measuredBy: actor.id, measuredByName: actor.name, at: at.toISOString() }
}

// ---------------------------------------------------------------- findings

export async function addFinding(trx: Knex.Transaction, actor: Actor, teardownId: number, input: z.infer<typeof FindingSchema>) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  assertOpen(td)
  const { inst, comp } = await partInTeardown(trx, td, engine, input.componentId)
  const existing = await trx('teardown_findings').where({ teardown_id: td.id, component_id: comp.id }).first('id')
  if (existing) conflict(`${comp.serial} already has finding ${existing.id} in this teardown: change that one`)
  const now = new Date()
  const [id] = await trx('teardown_findings').insert({
    teardown_id: td.id,
    component_id: comp.id,
    position: inst.position,
    condition: input.condition,
    note: input.note,
    disposition: input.disposition,
    created_by: actor.id,
    created_at: now,
  })
  await audit(trx, actor, { entity: 'teardown_finding', entityId: id!, action: 'create', after: { teardown: td.id, serial: comp.serial, condition: input.condition, disposition: input.disposition, note: input.note } })
  return { id: id!, componentId: comp.id, position: inst.position, condition: input.condition, note: input.note, disposition: input.disposition }
}

export async function updateFinding(trx: Knex.Transaction, actor: Actor, teardownId: number, findingId: number, input: z.infer<typeof FindingUpdateSchema>) {
  const { td } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  const f = await trx('teardown_findings').where({ id: findingId, teardown_id: td.id }).first()
  if (!f) notFound('Finding')
  assertOpen(td)
  const patch: Record<string, unknown> = {}
  if (input.condition !== undefined) patch.condition = input.condition
  if (input.note !== undefined) patch.note = input.note
  if (input.disposition !== undefined) patch.disposition = input.disposition
  await trx('teardown_findings').where('id', f.id).update(patch)
  await audit(trx, actor, { entity: 'teardown_finding', entityId: f.id, action: 'update', before: { condition: f.condition, note: f.note, disposition: f.disposition }, after: patch })
  return { id: f.id, componentId: f.component_id, position: f.position, condition: patch.condition ?? f.condition, note: patch.note !== undefined ? patch.note : f.note, disposition: patch.disposition ?? f.disposition }
}

// ---------------------------------------------------------------- photos

export interface PhotoStore {
  setItemRaw(key: string, value: Uint8Array): Promise<void>
  removeItem(key: string): Promise<void>
}

/**
 * Stores a checked image for a finding. The bytes go into storage under a generated key inside the
 * transaction, so a failed insert leaves nothing; if the commit itself fails the file is removed.
 */
export async function addPhoto(
  db: Knex,
  store: PhotoStore,
  actor: Actor,
  teardownId: number,
  findingId: number,
  photo: { bytes: Uint8Array; type: string; width: number | null; height: number | null; name: string | null },
) {
  const key = `teardown:photos:${randomUUID()}`
  let wrote = false
  try {
    return await db.transaction(async (trx) => {
      const { td } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
      const f = await trx('teardown_findings').where({ id: findingId, teardown_id: td.id }).first()
      if (!f) notFound('Finding')
      assertOpen(td)
      const now = new Date()
      const [id] = await trx('teardown_photos').insert({
        finding_id: f.id,
        storage_key: key,
        content_type: photo.type,
        size_bytes: photo.bytes.length,
        width: photo.width,
        height: photo.height,
        thumbnail_key: null,
        original_name: photo.name ? photo.name.slice(0, 255) : null,
        uploaded_by: actor.id,
        uploaded_at: now,
      })
      await audit(trx, actor, { entity: 'teardown_photo', entityId: id!, action: 'upload', after: { finding: f.id, contentType: photo.type, size: photo.bytes.length, width: photo.width, height: photo.height } })
      wrote = true
      await store.setItemRaw(key, photo.bytes)
      return { id: id!, findingId: f.id, url: `/api/teardown-photos/${id}`, contentType: photo.type, sizeBytes: photo.bytes.length, width: photo.width, height: photo.height }
    })
  } catch (e) {
    if (wrote) await store.removeItem(key).catch(() => {})
    throw e
  }
}

export async function photoFor(db: Knex, actor: Actor, photoId: number) {
  const p = await db('teardown_photos as p').join('teardown_findings as f', 'f.id', 'p.finding_id').where('p.id', photoId).first('p.*', 'f.teardown_id')
  if (!p) notFound('Photo')
  await teardownFor(db, actor, p.teardown_id).catch(() => notFound('Photo'))
  return { key: p.storage_key as string, contentType: p.content_type as string }
}

// ---------------------------------------------------------------- swaps

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
  const limits = limitsOf(ct!)
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

export async function swapPart(db: Knex, trx: Knex.Transaction, actor: Actor, teardownId: number, input: z.infer<typeof SwapSchema>) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  assertOpen(td)
  const current = await trx('installations').where({ engine_id: engine.id, position: input.position }).whereNull('to_at').first()
  const at = new Date()
  let removedStatus: 'serviceable' | 'quarantined' | 'scrapped' = 'serviceable'
  if (current) {
    const finding = await trx('teardown_findings').where({ teardown_id: td.id, component_id: current.component_id }).first('disposition')
    removedStatus = statusForDisposition(finding?.disposition ?? null)
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

// ---------------------------------------------------------------- readiness, submit, sign-off

/** What still stands between this teardown and a sign-off, as sentences naming the part. */
async function blockers(db: Db, td: any, engine: any): Promise<string[]> {
  const out: string[] = []
  const [et] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const { open, removed } = await teardownParts(db, td)
  const serials = new Map((await db('components').whereIn('id', [...open, ...removed].map((i: any) => i.component_id).concat([0])).select('id', 'serial')).map((r) => [r.id, r.serial]))
  const labelOf = (pos: string) => et!.positions.find((p) => p.position === pos)?.label ?? pos
  for (const p of et!.positions) if (!open.some((i: any) => i.position === p.position)) out.push(`${p.label} is empty: fit a part`)
  const findings = await db('teardown_findings').where('teardown_id', td.id)
  const out_of = await db('teardown_measurements').where('teardown_id', td.id).whereNot('verdict', 'in')
  for (const m of out_of) {
    if (!findings.some((f: any) => f.component_id === m.component_id)) {
      const inst = [...open, ...removed].find((i: any) => i.component_id === m.component_id)
      out.push(`${labelOf(inst?.position ?? '?')} (${serials.get(m.component_id)}): ${m.characteristic_key} is out of tolerance (${m.verdict}) and needs a finding`)
    }
  }
  for (const f of findings) {
    if (f.disposition === 'refit') continue
    if (open.some((i: any) => i.component_id === f.component_id)) out.push(`${labelOf(f.position)} (${serials.get(f.component_id)}): the finding says ${f.disposition} but the part is still fitted: swap it`)
  }
  return out
}

export async function submitTeardown(trx: Knex.Transaction, actor: Actor, teardownId: number) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  assertOpen(td)
  const problems = await blockers(trx, td, engine)
  if (problems.length) conflict(`Not ready for sign-off: ${problems.join('; ')}`, { problems })
  await trx('teardowns').where('id', td.id).update({ state: 'awaiting sign-off' })
  await audit(trx, actor, { entity: 'teardown', entityId: td.id, action: 'submit', before: { state: td.state }, after: { state: 'awaiting sign-off' } })
  return { id: td.id, state: 'awaiting sign-off' as const }
}

export async function reopenTeardown(trx: Knex.Transaction, actor: Actor, teardownId: number) {
  const { td } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  if (td.state !== 'awaiting sign-off') conflict(`Teardown ${td.id} is ${td.state}; only one awaiting sign-off can be reopened`)
  await trx('teardowns').where('id', td.id).update({ state: 'open' })
  await audit(trx, actor, { entity: 'teardown', entityId: td.id, action: 'reopen', before: { state: td.state }, after: { state: 'open' } })
  return { id: td.id, state: 'open' as const }
}

export async function signOffTeardown(trx: Knex.Transaction, actor: Actor, teardownId: number, input: z.infer<typeof SignOffSchema>) {
  const { td, engine } = await teardownFor(trx, actor, teardownId, { forUpdate: true })
  if (td.state === 'signed off') conflict(`Teardown ${td.id} is already signed off`)
  if (td.state !== 'awaiting sign-off') conflict(`Teardown ${td.id} is still open: mark it ready for sign-off first`)
  // The second pair of eyes: never the person who opened it or took its measurements.
  if (td.opened_by === actor.id) forbidden('You opened this teardown: a second person (supplier engineer or another mechanic) must sign it off')
  const measuredByMe = await trx('teardown_measurements').where({ teardown_id: td.id, measured_by: actor.id }).first('id')
  if (measuredByMe) forbidden('You recorded measurements in this teardown: a second person (supplier engineer or another mechanic) must sign it off')
  const problems = await blockers(trx, td, engine)
  if (problems.length) conflict(`Cannot sign off: ${problems.join('; ')}`, { problems })
  const at = new Date()
  await trx('teardowns').where('id', td.id).update({ state: 'signed off', signed_by: actor.id, signed_at: at, note: input.note ? [td.note, `Sign-off: ${input.note}`].filter(Boolean).join('\n') : td.note })
  await trx('engines').where('id', engine.id).update({ status: 'active', location: 'shelf', rebuilt_at: at })
  const partIds = (await trx('installations').where('engine_id', engine.id).whereNull('to_at').select('component_id')).map((r) => r.component_id)
  if (partIds.length) await trx('components').whereIn('id', partIds).update({ inspection_cleared_at: at })
  await audit(trx, actor, { entity: 'teardown', entityId: td.id, action: 'sign-off', before: { state: td.state }, after: { state: 'signed off', at: at.toISOString(), note: input.note } })
  await audit(trx, actor, { entity: 'engine', entityId: engine.id, action: 'rebuilt', before: { status: engine.status, location: engine.location, rebuiltAt: iso(engine.rebuilt_at) }, after: { status: 'active', location: 'shelf', rebuiltAt: at.toISOString(), inspectionClearedParts: partIds.length } })
  await bumpLifeRevision(trx)
  return { id: td.id, state: 'signed off' as const, signedAt: at.toISOString(), signedBy: actor.id }
}

// ---------------------------------------------------------------- reads

export async function listTeardowns(db: Knex, actor: Actor, q: { state?: string; engineId?: number }) {
  const qb = db('teardowns as t')
    .join('engines as e', 'e.id', 't.engine_id')
    .join('users as o', 'o.id', 't.opened_by')
    .leftJoin('users as s', 's.id', 't.signed_by')
    .leftJoin('organisations as team', 'team.id', 'e.team_id')
    .select('t.*', 'e.serial as engine_serial', 'e.team_id', 'e.supplier_id', 'team.name as team_name', 'o.name as opened_by_name', 's.name as signed_by_name')
    .orderBy('t.opened_at', 'desc')
  if (actor.role !== 'admin') {
    if (actor.organisationKind === 'supplier') qb.where('e.supplier_id', actor.organisationId)
    else qb.where('e.team_id', actor.organisationId)
  }
  if (q.state) qb.where('t.state', q.state)
  if (q.engineId) qb.where('t.engine_id', q.engineId)
  const rows = await qb
  const ids = rows.map((r) => r.id).concat([0])
  const counts = new Map<number, { measured: number; outOfTolerance: number }>()
  const perTeardown = (await db('teardown_measurements').whereIn('teardown_id', ids).select('teardown_id').count({ n: '*' }).sum({ out: db.raw("verdict <> 'in'") }).groupBy('teardown_id')) as unknown as { teardown_id: number; n: number | string; out: number | string }[]
  for (const m of perTeardown) {
    counts.set(m.teardown_id, { measured: Number(m.n), outOfTolerance: Number(m.out) })
  }
  const findings = new Map((await db('teardown_findings').whereIn('teardown_id', ids).select('teardown_id').count({ n: '*' }).groupBy('teardown_id')).map((r: any) => [r.teardown_id, Number(r.n)]))
  return rows.map((r) => ({
    id: r.id,
    engineId: r.engine_id,
    engineSerial: r.engine_serial,
    teamName: r.team_name ?? null,
    reason: r.reason,
    state: r.state,
    openedAt: iso(r.opened_at),
    openedByName: r.opened_by_name,
    signedAt: iso(r.signed_at),
    signedByName: r.signed_by_name ?? null,
    measured: counts.get(r.id)?.measured ?? 0,
    outOfTolerance: counts.get(r.id)?.outOfTolerance ?? 0,
    findings: findings.get(r.id) ?? 0,
  }))
}

export async function teardownDetail(db: Knex, actor: Actor, id: number) {
  const { td, engine } = await teardownFor(db, actor, id)
  const [et] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const componentTypes = new Map((await loadComponentTypes(db)).map((c) => [c.id, c]))
  const life = await fleetLife(db)
  const { open, removed } = await teardownParts(db, td)
  const allInst = [...open.map((i: any) => ({ ...i, removed: false })), ...removed.map((i: any) => ({ ...i, removed: true }))]
  const comps = new Map((await db('components').whereIn('id', allInst.map((i) => i.component_id).concat([0]))).map((c) => [c.id, c]))
  const measurements = await db('teardown_measurements as m').join('users as u', 'u.id', 'm.measured_by').where('m.teardown_id', td.id).select('m.*', 'u.name as measured_by_name')
  const findingRows = await db('teardown_findings').where('teardown_id', td.id).orderBy('id')
  const photos = await db('teardown_photos').whereIn('finding_id', findingRows.map((f) => f.id).concat([0])).orderBy('id')
  const swaps = await db('teardown_swaps as s')
    .leftJoin('installations as r', 'r.id', 's.removed_installation_id')
    .leftJoin('components as rc', 'rc.id', 'r.component_id')
    .join('installations as f', 'f.id', 's.fitted_installation_id')
    .join('components as fc', 'fc.id', 'f.component_id')
    .join('users as u', 'u.id', 's.swapped_by')
    .where('s.teardown_id', td.id)
    .orderBy('s.id')
    .select('s.*', 'rc.serial as removed_serial', 'fc.serial as fitted_serial', 'u.name as swapped_by_name')
  const users = new Map((await db('users').whereIn('id', [td.opened_by, td.signed_by ?? 0]).select('id', 'name')).map((u) => [u.id, u.name]))
  const team = engine.team_id ? await db('organisations').where('id', engine.team_id).first('name') : null
  const sortOf = (pos: string) => et!.positions.find((p) => p.position === pos)?.sort ?? 9999
  allInst.sort((a, b) => sortOf(a.position) - sortOf(b.position) || Number(a.removed) - Number(b.removed))

  const parts = allInst.map((i) => {
    const comp = comps.get(i.component_id)
    const ct = componentTypes.get(comp.component_type_id) as ComponentTypeDto
    const pl = life.parts.get(comp.id)
    return {
      componentId: comp.id,
      serial: comp.serial,
      position: i.position,
      positionLabel: et!.positions.find((p) => p.position === i.position)?.label ?? i.position,
      componentTypeId: ct.id,
      typeName: ct.name,
      removed: i.removed,
      hours: pl?.hours ?? 0,
      lifeFraction: pl?.fraction ?? 0,
      lifeStatus: pl?.status ?? 'ok',
      rows: (ct.characteristics as Characteristic[]).map((c) => {
        const m = measurements.find((x) => x.component_id === comp.id && x.characteristic_key === c.key)
        return {
          ...c,
          plausible: plausibleRange(c),
          measurement: m ? { value: num(m.value), unit: m.unit, verdict: m.verdict, measuredBy: m.measured_by, measuredByName: m.measured_by_name, at: iso(m.at) } : null,
        }
      }),
    }
  })
  const findings = findingRows.map((f) => ({
    id: f.id,
    componentId: f.component_id,
    serial: comps.get(f.component_id)?.serial ?? null,
    position: f.position,
    positionLabel: et!.positions.find((p) => p.position === f.position)?.label ?? f.position,
    condition: f.condition,
    note: f.note,
    disposition: f.disposition,
    createdAt: iso(f.created_at),
    photos: photos.filter((p) => p.finding_id === f.id).map((p) => ({ id: p.id, url: `/api/teardown-photos/${p.id}`, contentType: p.content_type, sizeBytes: p.size_bytes, width: p.width, height: p.height })),
  }))
  // Serviceable spares of the types this engine takes, with their life, for the swap form.
  const typeIds = [...new Set(et!.positions.map((p) => p.componentTypeId))]
  const spareRows = td.state === 'open' ? await db('components').whereIn('component_type_id', typeIds).where({ status: 'serviceable', supplier_id: engine.supplier_id }).orderBy('serial').select('id', 'serial', 'component_type_id') : []
  const spares = spareRows.map((s) => {
    const pl = life.parts.get(s.id)
    return { componentId: s.id, serial: s.serial, componentTypeId: s.component_type_id, hours: pl?.hours ?? 0, lifeFraction: pl?.fraction ?? 0, lifeStatus: pl?.status ?? 'ok' }
  })
  const measuredBy = [...new Set(measurements.map((m) => m.measured_by))]
  const engineLife = life.engines.find((e) => e.id === engine.id)
  return {
    id: td.id,
    state: td.state,
    reason: td.reason,
    note: td.note ?? null,
    openedAt: iso(td.opened_at),
    openedBy: td.opened_by,
    openedByName: users.get(td.opened_by) ?? '',
    signedAt: iso(td.signed_at),
    signedBy: td.signed_by ?? null,
    signedByName: td.signed_by ? (users.get(td.signed_by) ?? '') : null,
    engine: {
      id: engine.id,
      serial: engine.serial,
      typeCode: et!.code,
      typeName: et!.name,
      teamName: team?.name ?? null,
      status: engine.status,
      location: engine.location,
      rebuiltAt: iso(engine.rebuilt_at),
      totalHours: engineLife?.totalHours ?? 0,
      nextEvent: engineLife?.nextEvent ? { name: engineLife.nextEvent.name, startsAt: engineLife.nextEvent.startsAt, assigned: engineLife.nextEvent.assigned } : null,
    },
    parts,
    findings,
    swaps: swaps.map((s) => ({
      id: s.id,
      position: s.position,
      positionLabel: et!.positions.find((p) => p.position === s.position)?.label ?? s.position,
      removedSerial: s.removed_serial ?? null,
      removedStatus: s.removed_status,
      fittedSerial: s.fitted_serial,
      reason: s.reason,
      lifeWarning: s.life_warning ?? null,
      overrideReason: s.override_reason ?? null,
      swappedByName: s.swapped_by_name,
      at: iso(s.at),
    })),
    spares,
    blockers: td.state === 'signed off' ? [] : await blockers(db, td, engine),
    // People who may not sign: the opener and whoever measured.
    cannotSign: [...new Set([td.opened_by, ...measuredBy])],
    notice: TEARDOWN_NOTICE,
  }
}

// ---------------------------------------------------------------- wear and fleet findings

/** Running hours of each part at given moments, from installations and the sessions of the engines it sat in. */
async function partHoursAt(db: Db, componentIds: number[]) {
  const inst = componentIds.length ? await db('installations').whereIn('component_id', componentIds).select('component_id', 'engine_id', 'from_at', 'to_at') : []
  const engineIds = [...new Set(inst.map((i) => i.engine_id))]
  const sessions = engineIds.length ? await db('sessions').whereIn('engine_id', engineIds).select('engine_id', 'started_at', 'running_seconds') : []
  return (componentId: number, at: Date) => {
    const t = at.getTime()
    let seconds = 0
    for (const i of inst) {
      if (i.component_id !== componentId) continue
      const from = new Date(i.from_at).getTime()
      const to = i.to_at ? new Date(i.to_at).getTime() : Infinity
      for (const s of sessions) {
        const st = new Date(s.started_at).getTime()
        // Same window rule as the life engine: from <= session < to, and before the moment asked.
        if (s.engine_id === i.engine_id && st >= from && st < to && st < t) seconds += num(s.running_seconds)
      }
    }
    return seconds / 3600
  }
}

export async function partWear(db: Knex, actor: Actor, componentId: number) {
  const comp = await db('components').where('id', componentId).first()
  if (!comp) notFound('Part')
  const current = await db('installations as i').join('engines as e', 'e.id', 'i.engine_id').where('i.component_id', componentId).whereNull('i.to_at').first('e.team_id')
  const supplierSide = actor.role === 'admin' || (actor.organisationKind === 'supplier' && comp.supplier_id === actor.organisationId)
  // Same visibility as the part page: the supplier sees its parts; a team while the part sits in its engine.
  if (!supplierSide && !(current && current.team_id === actor.organisationId)) notFound('Part')
  const [ct] = await loadComponentTypes(db, (qb) => qb.where('id', comp.component_type_id))
  const rows = await db('teardown_measurements as m').join('teardowns as t', 't.id', 'm.teardown_id').join('engines as e', 'e.id', 't.engine_id').where('m.component_id', componentId).orderBy('m.at').select('m.*', 't.opened_at', 'e.serial as engine_serial')
  const hoursAt = await partHoursAt(db, [componentId])
  const now = new Date()
  const currentHours = hoursAt(componentId, now)
  const characteristics = (ct!.characteristics as Characteristic[]).map((c) => {
    const points = rows
      .filter((r) => r.characteristic_key === c.key)
      .map((r) => ({ teardownId: r.teardown_id, engineSerial: r.engine_serial, at: iso(r.at)!, hours: hoursAt(componentId, new Date(r.at)), value: num(r.value), verdict: r.verdict }))
    const trend = wearTrend(points)
    const hoursLeft = trend ? hoursToLimit(trend, currentHours, c) : null
    return {
      key: c.key,
      label: c.label,
      unit: c.unit,
      nominal: c.nominal,
      min: c.min,
      max: c.max,
      points,
      slopePerHour: trend?.slopePerHour ?? null,
      intercept: trend?.intercept ?? null,
      n: trend?.n ?? points.length,
      towards: trend ? (trend.slopePerHour > 0 ? 'max' : trend.slopePerHour < 0 ? 'min' : null) : null,
      hoursLeft,
    }
  })
  return { componentId, serial: comp.serial, typeName: ct!.name, currentHours, characteristics, notice: TEARDOWN_NOTICE }
}

export async function fleetFindings(db: Knex, actor: Actor) {
  const qb = db('teardown_findings as f')
    .join('teardowns as t', 't.id', 'f.teardown_id')
    .join('engines as e', 'e.id', 't.engine_id')
    .join('components as c', 'c.id', 'f.component_id')
    .select('f.*', 't.opened_at', 't.state', 'e.serial as engine_serial', 'c.serial', 'c.component_type_id')
    .orderBy('t.opened_at')
  if (actor.role !== 'admin') {
    if (actor.organisationKind === 'supplier') qb.where('e.supplier_id', actor.organisationId)
    else qb.where('e.team_id', actor.organisationId)
  }
  const rows = await qb
  const types = await loadComponentTypes(db, (q) => (actor.role === 'admin' ? q : q.where('supplier_id', actor.supplierId)))
  const hoursAt = await partHoursAt(db, [...new Set(rows.map((r) => r.component_id))])
  return types
    .map((ct) => {
      const mine = rows.filter((r) => r.component_type_id === ct.id).map((r) => ({ ...r, hours: hoursAt(r.component_id, new Date(r.opened_at)) }))
      const byCondition = new Map<string, number[]>()
      for (const r of mine) {
        let list = byCondition.get(r.condition)
        if (!list) byCondition.set(r.condition, (list = []))
        list.push(r.hours)
      }
      const dispositions: Record<string, number> = {}
      for (const r of mine) dispositions[r.disposition] = (dispositions[r.disposition] ?? 0) + 1
      return {
        componentTypeId: ct.id,
        code: ct.code,
        name: ct.name,
        limitHours: ct.limitHours,
        findings: mine.length,
        conditions: [...byCondition.entries()].map(([condition, hours]) => ({
          condition,
          count: hours.length,
          minHours: Math.min(...hours),
          maxHours: Math.max(...hours),
          meanHours: hours.reduce((a, b) => a + b, 0) / hours.length,
        })).sort((a, b) => b.count - a.count),
        dispositions,
        rows: mine.map((r) => ({ findingId: r.id, teardownId: r.teardown_id, engineSerial: r.engine_serial, serial: r.serial, condition: r.condition, disposition: r.disposition, note: r.note, hours: r.hours, at: iso(r.opened_at) })),
      }
    })
    .filter((t) => t.findings > 0)
}
