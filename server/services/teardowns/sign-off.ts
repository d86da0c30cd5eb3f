// Readiness, submission and the second person's sign-off that returns the engine to service.
import type { Knex } from 'knex'
import { z } from 'zod'
import type { SignOffSchema } from '#shared/schemas/teardown'
import type { Actor } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { conflict, forbidden } from '../../utils/errors'
import { iso } from '../../utils/db'
import { bumpLifeRevision, loadEngineTypes } from '../fleet-data'
import { teardownFor, assertOpen, teardownParts, type Db } from './common'

/** What still stands between this teardown and a sign-off, as sentences naming the part. */
export async function blockers(db: Db, td: any, engine: any): Promise<string[]> {
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
