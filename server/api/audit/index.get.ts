import { z } from 'zod'
import { line } from '#shared/text'

const Query = z.object({
  entity: line().trim().max(60).optional(),
  action: line().trim().max(60).optional(),
  userId: z.coerce.number().int().positive().optional(),
  from: z.iso.date().optional(),
  to: z.iso.date().optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
})

// Read-only: the app has no route that edits or deletes audit rows.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer'])
  const q = readValidQuery(event, Query)
  const db = useDb()
  const base = db('audit_log as a').leftJoin('users as u', 'u.id', 'a.user_id').leftJoin('organisations as o', 'o.id', 'a.organisation_id')
  // The supplier engineer sees the entries of the supplier and its teams; admins everything.
  if (actor.role !== 'admin') base.where((w) => w.where('o.id', actor.supplierId).orWhere('o.supplier_id', actor.supplierId))
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
})
