import type { Knex } from 'knex'

// Filled in with the fleet model: engine types, parts, engines, events and sessions.
export async function seedFleet(_trx: Knex.Transaction, _ctx: { supplierId: number; teams: Record<string, number>; now: Date }) {}
