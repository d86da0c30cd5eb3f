// The supplier and its customer teams.
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { OrganisationCreateSchema } from '#shared/schemas/user'
import { scopeOrganisations, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict } from '../utils/errors'

type OrganisationInput = z.infer<typeof OrganisationCreateSchema>

/** Admins see every organisation; the supplier sees itself and its teams; a team sees itself. */
export async function listOrganisations(db: Knex, actor: Actor) {
  const rows = await scopeOrganisations(db('organisations').select('id', 'name', 'kind', 'supplier_id').orderBy(['kind', 'name']), actor)
  return rows.map((r) => ({ id: r.id, name: r.name, kind: r.kind, supplierId: r.supplier_id }))
}

export async function createOrganisation(db: Knex, actor: Actor, input: OrganisationInput) {
  // A team leases from a supplier; a supplier stands alone.
  const supplierId = input.kind === 'team' ? input.supplierId : null
  if (input.kind === 'team' && !input.supplierId) badRequest('Invalid input: supplierId: a team needs the supplier it leases from')
  return db.transaction(async (trx) => {
    if (await trx('organisations').where('name', input.name).first()) conflict(`An organisation named ${input.name} already exists`)
    if (input.supplierId) {
      const supplier = await trx('organisations').where({ id: input.supplierId, kind: 'supplier' }).first()
      if (!supplier) badRequest('Invalid input: supplierId: no such supplier')
    }
    const [id] = await trx('organisations').insert({ name: input.name, kind: input.kind, supplier_id: supplierId })
    await audit(trx, actor, { entity: 'organisation', entityId: id!, action: 'create', after: input })
    return { id, name: input.name, kind: input.kind, supplierId }
  })
}
