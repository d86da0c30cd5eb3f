// The sessions list: every session the actor may see, filtered and paged, newest first by default.
import type { Knex } from 'knex'
import type { SessionListQuery } from '#shared/schemas/sessions'
import type { SessionListDto, SessionListItemDto } from '#shared/types/fleet'
import type { Actor } from '../utils/guard'
import { scopeQuery } from '../utils/guard'
import { iso, num, numOrNull } from '../utils/db'

const DAY_MS = 86_400_000

export async function listSessions(db: Knex, actor: Actor, q: SessionListQuery): Promise<SessionListDto> {
  // Scoped like a session page: the supplier that owns the engine, or the team that ran the session.
  const base = scopeQuery(db('sessions as s').join('engines as e', 'e.id', 's.engine_id'), actor, { supplier: 'e.supplier_id', team: 's.team_id' })
  if (q.engineId) base.where('s.engine_id', q.engineId)
  if (q.eventId) base.where('s.event_id', q.eventId)
  if (q.kind) base.where('s.kind', q.kind)
  if (q.source) base.where('s.source', q.source)
  if (q.from) base.where('s.started_at', '>=', new Date(`${q.from}T00:00:00Z`))
  if (q.to) base.where('s.started_at', '<', new Date(Date.parse(`${q.to}T00:00:00Z`) + DAY_MS))
  if (q.voided === 'hide') base.whereNull('s.voided_at')
  if (q.voided === 'only') base.whereNotNull('s.voided_at')

  const counted = await base.clone().count({ n: '*' }).first()
  const rows = await base
    .clone()
    .join('engine_types as et', 'et.id', 'e.engine_type_id')
    .leftJoin('events as ev', 'ev.id', 's.event_id')
    .leftJoin('organisations as o', 'o.id', 's.team_id')
    .leftJoin('users as vu', 'vu.id', 's.voided_by')
    .select(
      's.id', 's.engine_id', 's.event_id', 's.kind', 's.started_at', 's.running_seconds', 's.distance_km', 's.max_rpm', 's.source', 's.file_name',
      's.voided_at', 's.void_reason', 'e.serial as engine_serial', 'et.code as engine_type_code', 'ev.name as event_name', 'o.name as team_name', 'vu.name as voided_by_name',
    )
    // Over-rev events carry their time-at-rpm profiles: count them in the database rather than read them.
    .select(db.raw('COALESCE(JSON_LENGTH(s.over_revs), 0) AS over_rev_count'))
    .orderBy('s.started_at', q.dir)
    .orderBy('s.id', q.dir)
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  return { items: rows.map(toListItem), total: Number(counted?.n ?? 0), page: q.page, pageSize: q.pageSize }
}

function toListItem(r: any): SessionListItemDto {
  return {
    id: r.id,
    engineId: r.engine_id,
    engineSerial: r.engine_serial,
    engineTypeCode: r.engine_type_code,
    teamName: r.team_name ?? null,
    eventId: r.event_id ?? null,
    eventName: r.event_name ?? null,
    kind: r.kind,
    startedAt: iso(r.started_at)!,
    runningSeconds: num(r.running_seconds),
    distanceKm: num(r.distance_km),
    maxRpm: numOrNull(r.max_rpm),
    overRevCount: Number(r.over_rev_count),
    source: r.source,
    fileName: r.file_name ?? null,
    voided: r.voided_at ? { at: iso(r.voided_at)!, byName: r.voided_by_name ?? null, reason: r.void_reason ?? '' } : null,
  }
}
