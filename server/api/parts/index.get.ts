import { z } from 'zod'
import { line } from '#shared/text'
import { FLEET_READERS } from '#shared/roles'
import { fleetLife } from '../../services/life'

const Query = z.object({
  q: line().trim().max(60).optional(),
  status: z.enum(['serviceable', 'installed', 'quarantined', 'scrapped']).optional(),
  typeId: z.coerce.number().int().positive().optional(),
})

// The supplier sees all of its parts; a team sees the parts in its engines.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const q = readValidQuery(event, Query)
  const db = useDb()
  const life = await fleetLife(db)
  const qb = db('components as c')
    .leftJoin('installations as i', (j) => j.on('i.component_id', 'c.id').andOnNull('i.to_at'))
    .leftJoin('engines as e', 'e.id', 'i.engine_id')
    .select('c.id', 'c.serial', 'c.status', 'c.supplier_id', 'e.id as engine_id', 'e.serial as engine_serial', 'e.team_id', 'i.position')
    .orderBy('c.serial')
    .limit(500)
  if (actor.role !== 'admin') {
    if (actor.organisationKind === 'supplier') qb.where('c.supplier_id', actor.organisationId)
    else qb.where('e.team_id', actor.organisationId)
  }
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
})
