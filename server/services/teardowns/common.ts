// What every part of a teardown shares: finding the teardown the actor may see, its parts, and its state.
import type { Knex } from 'knex'
import type { Actor } from '../../utils/guard'
import { canSee } from '../../utils/guard'
import { badRequest, conflict, notFound } from '../../utils/errors'
import { loadComponentTypes, loadEngineTypes } from '../fleet-data'

export type Db = Knex | Knex.Transaction
export const FALLBACK_SECONDS_PER_EVENT = 3 * 3600

export const fmt = (v: number) => String(Number(v.toPrecision(8)))

/** A teardown the actor may see (another team's answers 404), with its engine row. */
export async function teardownFor(db: Db, actor: Actor, id: number, opts: { forUpdate?: boolean } = {}) {
  const qb = db('teardowns').where('id', id)
  if (opts.forUpdate) qb.forUpdate()
  const td = await qb.first()
  if (!td) notFound('Teardown')
  const engine = await db('engines').where('id', td.engine_id).first()
  if (!engine || !canSee(actor, { supplierId: engine.supplier_id, teamId: engine.team_id })) notFound('Teardown')
  return { td, engine }
}

export function assertOpen(td: any) {
  if (td.state === 'signed off') conflict(`Teardown ${td.id} is signed off: nothing can be changed`)
  if (td.state !== 'open') conflict(`Teardown ${td.id} is awaiting sign-off: reopen it to change it`)
}

/** Parts that belong to this teardown: fitted now, or removed during it. */
export async function teardownParts(db: Db, td: any) {
  const open = await db('installations').where('engine_id', td.engine_id).whereNull('to_at')
  const removed = await db('teardown_swaps as s').join('installations as i', 'i.id', 's.removed_installation_id').where('s.teardown_id', td.id).select('i.*')
  return { open, removed }
}

export async function partInTeardown(db: Db, td: any, engine: any, componentId: number) {
  const { open, removed } = await teardownParts(db, td)
  const inst = open.find((i: any) => i.component_id === componentId) ?? removed.find((i: any) => i.component_id === componentId)
  if (!inst) badRequest(`Invalid input: componentId: part ${componentId} is not part of ${engine.serial}'s build in this teardown`)
  const comp = await db('components').where('id', componentId).first()
  const [ct] = await loadComponentTypes(db, (qb) => qb.where('id', comp.component_type_id))
  const [et] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const pos = et!.positions.find((p) => p.position === inst.position)
  return { inst, comp, ct: ct!, label: pos?.label ?? inst.position }
}
