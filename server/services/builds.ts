// Fitting and removing parts. The database refuses double installs too (unique open_flag indexes);
// these checks exist to answer with a clear 409 rather than a constraint error.
import type { Knex } from 'knex'
import type { Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { bumpLifeRevision } from './fleet-data'
import { engineRowFor } from './engine-rows'

export async function fitPart(trx: Knex.Transaction, actor: Actor, engineId: number, input: { position: string; serial: string; at?: string }) {
  const engine = await engineRowFor(trx, actor, engineId, { forUpdate: true })
  const at = input.at ? new Date(input.at) : new Date()
  const pos = await trx('engine_type_positions').where({ engine_type_id: engine.engine_type_id, position: input.position }).first()
  if (!pos) badRequest(`Invalid input: position: ${engine.serial} has no position "${input.position}"`)
  const part = await trx('components').where('serial', input.serial).forUpdate().first()
  if (!part || part.supplier_id !== engine.supplier_id) notFound(`Part ${input.serial}`)
  if (part.component_type_id !== pos.component_type_id) {
    const [want, got] = await Promise.all([trx('component_types').where('id', pos.component_type_id).first(), trx('component_types').where('id', part.component_type_id).first()])
    badRequest(`Invalid input: serial: ${input.serial} is a ${got.name} (${got.code}); ${pos.label} takes a ${want.name} (${want.code})`)
  }
  const elsewhere = await trx('installations as i').join('engines as e', 'e.id', 'i.engine_id').where('i.component_id', part.id).whereNull('i.to_at').first('e.serial', 'i.position')
  if (elsewhere) conflict(`${input.serial} is already installed in ${elsewhere.serial} at ${elsewhere.position}`)
  if (part.status === 'quarantined') conflict(`${input.serial} is quarantined pending inspection and cannot be fitted; the supplier engineer can release it with a concession on the part's page`)
  if (part.status === 'scrapped') conflict(`${input.serial} is scrapped and can never be fitted again`)
  if (part.status !== 'serviceable') conflict(`${input.serial} is ${part.status}, not serviceable`)
  const occupied = await trx('installations as i').join('components as c', 'c.id', 'i.component_id').where({ 'i.engine_id': engineId, 'i.position': input.position }).whereNull('i.to_at').first('c.serial')
  if (occupied) conflict(`${pos.label} of ${engine.serial} already holds ${occupied.serial}: remove it first`)
  const lastOut = await trx('installations').where('component_id', part.id).max({ t: 'to_at' }).first()
  if (lastOut?.t && new Date(lastOut.t) > at) badRequest('Invalid input: at: before the part was last removed')
  const [id] = await trx('installations').insert({ component_id: part.id, engine_id: engineId, position: input.position, from_at: at, created_by: actor.id })
  await trx('components').where('id', part.id).update({ status: 'installed' })
  await audit(trx, actor, { entity: 'installation', entityId: id!, action: 'fit', after: { engine: engine.serial, position: input.position, serial: input.serial, at: at.toISOString() } })
  await bumpLifeRevision(trx)
  return { id: id!, engineId, position: input.position, serial: input.serial, from: at.toISOString() }
}

export async function removePart(trx: Knex.Transaction, actor: Actor, installationId: number, input: { at?: string; status: 'serviceable' | 'quarantined' | 'scrapped' }) {
  const inst = await trx('installations').where('id', installationId).forUpdate().first()
  if (!inst) notFound('Installation')
  const engine = await engineRowFor(trx, actor, inst.engine_id, { forUpdate: true })
  if (inst.to_at) conflict('This part was already removed')
  const at = input.at ? new Date(input.at) : new Date()
  if (at < new Date(inst.from_at)) badRequest('Invalid input: at: before the part was fitted')
  await trx('installations').where('id', installationId).update({ to_at: at, removed_status: input.status })
  const part = await trx('components').where('id', inst.component_id).first()
  await trx('components').where('id', inst.component_id).update({ status: input.status })
  await audit(trx, actor, { entity: 'installation', entityId: installationId, action: 'remove', before: { engine: engine.serial, position: inst.position, serial: part.serial }, after: { at: at.toISOString(), status: input.status } })
  await bumpLifeRevision(trx)
  return { id: installationId, to: at.toISOString(), status: input.status }
}
