import { ANY_ROLE } from '#shared/roles'

// Admins see every organisation; the supplier sees itself and its teams; a team sees itself.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const qb = useDb()('organisations').select('id', 'name', 'kind', 'supplier_id').orderBy(['kind', 'name'])
  if (actor.role !== 'admin') {
    if (actor.organisationKind === 'supplier') qb.where((w) => w.where('id', actor.organisationId).orWhere('supplier_id', actor.organisationId))
    else qb.where('id', actor.organisationId)
  }
  const rows = await qb
  return rows.map((r) => ({ id: r.id, name: r.name, kind: r.kind, supplierId: r.supplier_id }))
})
