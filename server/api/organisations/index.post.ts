import { OrganisationCreateSchema } from '#shared/schemas/user'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin'])
  const input = await readValidBody(event, OrganisationCreateSchema)
  const db = useDb()
  if (input.kind === 'team' && !input.supplierId) badRequest('Invalid input: supplierId: a team needs the supplier it leases from')
  return db.transaction(async (trx) => {
    if (await trx('organisations').where('name', input.name).first()) conflict(`An organisation named ${input.name} already exists`)
    if (input.supplierId) {
      const supplier = await trx('organisations').where({ id: input.supplierId, kind: 'supplier' }).first()
      if (!supplier) badRequest('Invalid input: supplierId: no such supplier')
    }
    const [id] = await trx('organisations').insert({ name: input.name, kind: input.kind, supplier_id: input.kind === 'team' ? input.supplierId : null })
    await audit(trx, actor, { entity: 'organisation', entityId: id!, action: 'create', after: input })
    setResponseStatus(event, 201)
    return { id, name: input.name, kind: input.kind, supplierId: input.kind === 'team' ? input.supplierId : null }
  })
})
