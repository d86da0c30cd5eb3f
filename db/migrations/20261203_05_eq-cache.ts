import type { Knex } from 'knex'

// Each exact session's equivalent hours for the (exponent, reference rpm) pairs in use, evaluated
// from its rpm moments: fleet-wide computations read these few numbers instead of the moments
// (server/services/session-usage.ts fills what is missing).
export async function up(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.json('eq_cache').nullable()
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.dropColumn('eq_cache')
  })
}
