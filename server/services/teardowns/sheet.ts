// The teardown sheet: opening a teardown, its measurements, and reading teardowns back.
import type { Knex } from 'knex'
import { z } from 'zod'
import { suggestRemovalState } from '#shared/domain/part-state'
import { TEARDOWN_NOTICE, judge, plausibleRange, type Characteristic } from '#shared/domain/teardown'
import type { MeasurementSchema, TeardownStartSchema } from '#shared/schemas/teardown'
import type { ComponentTypeDto } from '#shared/types/fleet'
import type { Actor } from '../../utils/guard'
import { scopeQuery } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest, conflict } from '../../utils/errors'
import { iso, num } from '../../utils/db'
import { bumpLifeRevision, loadComponentTypes, loadEngineTypes } from '../fleet-data'
import { engineRowFor } from '../engine-rows'
import { releaseComingPlans } from '../plan-release'
import { fleetLife } from '../life'
import { fmt, teardownFor, assertOpen, teardownParts, partInTeardown } from './common'
import { blockers } from './sign-off'

export async function startTeardown(trx: Knex.Transaction, actor: Actor, input: z.infer<typeof TeardownStartSchema>, notice: { publicUrl: string } = { publicUrl: '' }) {
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
  // An engine in teardown cannot run its coming events: free the cars and tell the team's managers.
  const released = await releaseComingPlans(trx, actor, engine, {
    because: 'went into teardown',
    occasion: `teardown-${id}`,
    engineTypeCode: (await trx('engine_types').where('id', engine.engine_type_id).first('code')).code,
    publicUrl: notice.publicUrl,
  })
  await bumpLifeRevision(trx)
  return { id: id!, engineId: engine.id, state: 'open' as const, releasedPlans: released.released }
}


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
  const before = await trx('teardown_measurements as m')
    .join('users as u', 'u.id', 'm.measured_by')
    .where({ 'm.teardown_id': td.id, 'm.component_id': comp.id, 'm.characteristic_key': c.key })
    .first('m.*', 'u.name as measured_by_name')
  const version = before ? Number(before.version) : 0
  if (input.baseVersion !== undefined && input.baseVersion !== version) {
    // The same value sent again (a retry after a lost answer) is no conflict: nothing to write.
    if (before && sameReading(num(before.value), value)) return measurementAnswer(before, comp.id)
    const current = before ? measurementAnswer(before, comp.id) : null
    const was = current ? `${fmt(current.value)} ${current.unit}, by ${current.measuredByName}` : 'no reading'
    conflict(`value: ${c.label} of ${label} (${comp.serial}) was changed by someone else since you last saw it (now ${was}); keep theirs or send yours again`, { field: 'value', current })
  }
  const row = { value, unit: c.unit, verdict, measured_by: actor.id, at, version: version + 1 }
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
  return { id, componentId: comp.id, key: c.key, value, unit: c.unit, verdict, measuredBy: actor.id, measuredByName: actor.name, at: at.toISOString(), version: version + 1 }
}

// Readings are stored to 6 decimals (DECIMAL(14,6)); a unit conversion may leave float noise below that.
const sameReading = (a: number, b: number) => Math.round(a * 1e6) === Math.round(b * 1e6)

function measurementAnswer(m: any, componentId: number) {
  return { id: m.id as number, componentId, key: m.characteristic_key as string, value: num(m.value), unit: m.unit as string, verdict: m.verdict as string, measuredBy: m.measured_by as number, measuredByName: m.measured_by_name as string, at: iso(m.at)!, version: Number(m.version) }
}


export async function listTeardowns(db: Knex, actor: Actor, q: { state?: string; engineId?: number }) {
  const qb = db('teardowns as t')
    .join('engines as e', 'e.id', 't.engine_id')
    .join('users as o', 'o.id', 't.opened_by')
    .leftJoin('users as s', 's.id', 't.signed_by')
    .leftJoin('organisations as team', 'team.id', 'e.team_id')
    .select('t.*', 'e.serial as engine_serial', 'e.team_id', 'e.supplier_id', 'team.name as team_name', 'o.name as opened_by_name', 's.name as signed_by_name')
    .orderBy('t.opened_at', 'desc')
  scopeQuery(qb, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })
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
  // a finding the supplier marked as the team's doing: priced on the team's statement by its lease contract
  const charges = new Map(
    (await db('finding_charges as c').join('users as u', 'u.id', 'c.marked_by').whereIn('c.finding_id', findingRows.map((f) => f.id).concat([0])).select('c.finding_id', 'c.reason', 'c.marked_at', 'u.name')).map((c) => [
      c.finding_id,
      { reason: c.reason as string, markedAt: iso(c.marked_at), markedByName: c.name as string },
    ]),
  )
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

  const engineInspectionOpen = life.engines.find((e) => e.id === engine.id)?.overRevFlags.immediateInspection ?? false
  const parts = allInst.map((i) => {
    const comp = comps.get(i.component_id)
    const ct = componentTypes.get(comp.component_type_id) as ComponentTypeDto
    const pl = life.parts.get(comp.id)
    const finding = findingRows.filter((f) => f.component_id === comp.id).at(-1)
    // What the swap form offers first for this part's removal; the mechanic still chooses.
    const removal = suggestRemovalState({ findingDisposition: finding?.disposition ?? null, engineInspectionOpen, partInspectionOpen: pl?.immediateInspection ?? false, fraction: pl?.fraction ?? 0 })
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
      suggestedDisposition: removal.state,
      suggestionReasons: removal.reasons,
      rows: (ct.characteristics as Characteristic[]).map((c) => {
        const m = measurements.find((x) => x.component_id === comp.id && x.characteristic_key === c.key)
        return {
          ...c,
          plausible: plausibleRange(c),
          measurement: m ? { value: num(m.value), unit: m.unit, verdict: m.verdict, measuredBy: m.measured_by, measuredByName: m.measured_by_name, at: iso(m.at), version: Number(m.version) } : null,
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
    charge: charges.get(f.id) ?? null,
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
