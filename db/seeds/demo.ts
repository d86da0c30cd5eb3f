// The demo scenario: an invented engine supplier with its rebuild workshop and three invented
// customer teams in two invented series. Nothing here names a real team, brand, track or person.
import type { Knex } from 'knex'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { seedBilling } from './billing'
import { seedFleet } from './fleet'
import { seedOil } from './oil'
import { seedTeardowns } from './teardowns'
import { seedAllocation } from './allocation'
import { seedEvidence } from './evidence'

export const DEMO_PASSWORD = 'ledger-demo-2026'

export const DEMO_USERS = [
  { email: 'admin@keelbrook.test', name: 'Ada Morrow', role: 'admin', org: 'Keelbrook Engine Works' },
  { email: 'engineer@keelbrook.test', name: 'Tomas Brell', role: 'supplier_engineer', org: 'Keelbrook Engine Works' },
  { email: 'workshop@keelbrook.test', name: 'Rhea Duval', role: 'mechanic', org: 'Keelbrook Engine Works' },
  { email: 'manager@marlowe.test', name: 'Jonas Pike', role: 'team_manager', org: 'Marlowe Vane Racing' },
  { email: 'race@marlowe.test', name: 'Mira Sato', role: 'race_engineer', org: 'Marlowe Vane Racing' },
  { email: 'mechanic@marlowe.test', name: 'Owen Hale', role: 'mechanic', org: 'Marlowe Vane Racing' },
  { email: 'manager@tidewater.test', name: 'Lena Voss', role: 'team_manager', org: 'Tidewater Apex Motorsport' },
  { email: 'race@tidewater.test', name: 'Piet Aalto', role: 'race_engineer', org: 'Tidewater Apex Motorsport' },
  { email: 'manager@redfern.test', name: 'Carys Quill', role: 'team_manager', org: 'Redfern Lattice Racing' },
  { email: 'race@redfern.test', name: 'Dario Fenn', role: 'race_engineer', org: 'Redfern Lattice Racing' },
] as const

export async function seedDemo(knex: Knex, opts: { now?: Date } = {}) {
  const now = opts.now ?? new Date()
  const hash = new Hash(new Scrypt({}))
  const passwordHash = await hash.make(DEMO_PASSWORD)
  await knex.transaction(async (trx) => {
    const [supplierId] = await trx('organisations').insert({ name: 'Keelbrook Engine Works', kind: 'supplier' })
    const teams: Record<string, number> = {}
    for (const name of ['Marlowe Vane Racing', 'Tidewater Apex Motorsport', 'Redfern Lattice Racing']) {
      const [id] = await trx('organisations').insert({ name, kind: 'team', supplier_id: supplierId })
      teams[name] = id!
    }
    const orgId = (name: string) => (name === 'Keelbrook Engine Works' ? supplierId! : teams[name]!)
    for (const u of DEMO_USERS) {
      await trx('users').insert({ email: u.email, name: u.name, role: u.role, organisation_id: orgId(u.org), password_hash: passwordHash })
    }
    await seedFleet(trx, { supplierId: supplierId!, teams, now })
    await seedOil(trx, { now })
    await seedTeardowns(trx)
    await seedBilling(trx, { supplierId: supplierId!, teams, now })
    await seedAllocation(trx, { supplierId: supplierId!, teams, now })
    await seedEvidence(trx)
  })
}
