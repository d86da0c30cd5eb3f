// Engines as their pages read them: the fleet list, one engine's sessions and its charts.
import type { Knex } from 'knex'
import type { Actor } from '../utils/guard'
import { toSessionDto } from './fleet-data'
import { engineRowFor } from './engine-rows'
import { visibleFleet } from './fleet-scope'
import { engineCharts } from './part-history'

export { visibleEngine as engineDetail } from './fleet-scope'

/** Every visible engine's summary (without its parts). */
export async function listEngines(db: Knex, actor: Actor) {
  const { engines } = await visibleFleet(db, actor)
  return engines.map(({ parts: _parts, emptyPositions: _empty, ...summary }) => summary)
}

export interface EngineSessionsPage {
  page: number
  pageSize: number
  sort: 'startedAt' | 'runningSeconds' | 'kind' | 'distanceKm'
  dir: 'asc' | 'desc'
}
const SORT_COLUMN = { startedAt: 's.started_at', runningSeconds: 's.running_seconds', kind: 's.kind', distanceKm: 's.distance_km' } as const

export async function engineSessions(db: Knex, actor: Actor, id: number, q: EngineSessionsPage) {
  await engineRowFor(db, actor, id)
  const base = db('sessions as s').where('s.engine_id', id)
  const n = (await base.clone().count({ n: '*' }).first())?.n ?? 0
  const rows = await base
    .clone()
    .join('engines as e', 'e.id', 's.engine_id')
    .leftJoin('events as ev', 'ev.id', 's.event_id')
    .leftJoin('users as vu', 'vu.id', 's.voided_by')
    .select('s.*', 'e.serial as engine_serial', 'ev.name as event_name', 'vu.name as voided_by_name')
    .orderBy(SORT_COLUMN[q.sort], q.dir)
    .orderBy('s.id', q.dir)
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  return { items: rows.map(toSessionDto), total: Number(n) }
}

export async function engineChartsFor(db: Knex, actor: Actor, id: number) {
  await engineRowFor(db, actor, id)
  return engineCharts(db, id)
}
