// The parts list: serialised parts with where they sit and their life.
import type { Knex } from 'knex'
import { scopeQuery, type Actor } from '../utils/guard'
import { fleetLife } from './life'

export interface PartFilter {
  q?: string
  status?: 'serviceable' | 'installed' | 'quarantined' | 'scrapped'
  typeId?: number
}

/** The supplier sees all of its parts; a team sees the parts in its engines. */
export async function listParts(db: Knex, actor: Actor, q: PartFilter) {
  const life = await fleetLife(db)
  const qb = db('components as c')
    .leftJoin('installations as i', (j) => j.on('i.component_id', 'c.id').andOnNull('i.to_at'))
    .leftJoin('engines as e', 'e.id', 'i.engine_id')
    .select('c.id', 'c.serial', 'c.status', 'c.supplier_id', 'e.id as engine_id', 'e.serial as engine_serial', 'e.team_id', 'i.position')
    .orderBy('c.serial')
    .limit(500)
  scopeQuery(qb, actor, { supplier: 'c.supplier_id', team: 'e.team_id' })
  if (q.q) qb.where('c.serial', 'like', `%${q.q.replace(/[%_\\]/g, (m) => `\\${m}`)}%`)
  if (q.status) qb.where('c.status', q.status)
  if (q.typeId) qb.where('c.component_type_id', q.typeId)
  const rows = await qb
  return rows.map((r) => {
    const p = life.parts.get(r.id)
    return {
      componentId: r.id,
      serial: r.serial,
      typeName: p?.typeName ?? '',
      category: p?.category ?? '',
      componentStatus: r.status,
      engineId: r.engine_id ?? null,
      engineSerial: r.engine_serial ?? null,
      position: p?.positionLabel ?? r.position ?? null,
      fraction: p?.fraction ?? 0,
      status: p?.status ?? 'ok',
      governing: p?.governing ?? null,
    }
  })
}
