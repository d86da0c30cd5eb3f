// Reading the audit log (append-only: nothing in the app edits or deletes its rows).
import type { Knex } from 'knex'
import { scopeAuditTrail, type Actor } from '../utils/guard'
import { iso, json } from '../utils/db'

export interface AuditFilter {
  entity?: string
  action?: string
  userId?: number
  /** Dates (YYYY-MM-DD, UTC), both days included. */
  from?: string
  to?: string
  page: number
  pageSize: number
}

/** One page of entries, newest first, with the total and the entity names to filter by. */
export async function auditTrail(db: Knex, actor: Actor, q: AuditFilter) {
  const base = db('audit_log as a').leftJoin('users as u', 'u.id', 'a.user_id').leftJoin('organisations as o', 'o.id', 'a.organisation_id')
  scopeAuditTrail(base, actor, { id: 'o.id', supplier: 'o.supplier_id' })
  if (q.entity) base.where('a.entity', q.entity)
  if (q.action) base.where('a.action', q.action)
  if (q.userId) base.where('a.user_id', q.userId)
  if (q.from) base.where('a.at', '>=', new Date(`${q.from}T00:00:00Z`))
  if (q.to) base.where('a.at', '<', new Date(new Date(`${q.to}T00:00:00Z`).getTime() + 86_400_000))
  const n = (await base.clone().count({ n: '*' }).first())?.n ?? 0
  const rows = await base
    .clone()
    .select('a.*', 'u.name as user_name', 'o.name as org_name')
    .orderBy('a.id', 'desc')
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  const entities = await db('audit_log').distinct('entity').orderBy('entity')
  return {
    total: Number(n),
    entities: entities.map((e) => e.entity),
    items: rows.map((r) => ({
      id: r.id,
      at: iso(r.at),
      userName: r.user_name ?? null,
      organisationName: r.org_name ?? null,
      entity: r.entity,
      entityId: r.entity_id,
      action: r.action,
      before: json(r.before_value, null),
      after: json(r.after_value, null),
    })),
  }
}
