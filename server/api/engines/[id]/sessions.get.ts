import { z } from 'zod'
import { FLEET_READERS } from '#shared/roles'
import { engineRowFor } from '../../../services/fleet-scope'
import { toSessionDto } from '../../../services/fleet-data'

const Query = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(20),
  sort: z.enum(['startedAt', 'runningSeconds', 'kind', 'distanceKm']).default('startedAt'),
  dir: z.enum(['asc', 'desc']).default('desc'),
})
const SORT_COLUMN = { startedAt: 's.started_at', runningSeconds: 's.running_seconds', kind: 's.kind', distanceKm: 's.distance_km' } as const

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const q = readValidQuery(event, Query)
  const db = useDb()
  await engineRowFor(db, actor, id)
  const base = db('sessions as s').where('s.engine_id', id)
  const n = (await base.clone().count({ n: '*' }).first())?.n ?? 0
  const rows = await base
    .clone()
    .join('engines as e', 'e.id', 's.engine_id')
    .leftJoin('events as ev', 'ev.id', 's.event_id')
    .select('s.*', 'e.serial as engine_serial', 'ev.name as event_name')
    .orderBy(SORT_COLUMN[q.sort], q.dir)
    .orderBy('s.id', q.dir)
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  return { items: rows.map(toSessionDto), total: Number(n) }
})
