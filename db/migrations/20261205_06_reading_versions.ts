import type { Knex } from 'knex'

// A counter per stored reading, raised by every change. A client that typed a reading while offline
// sends the version it last saw; a different one on the server means someone else changed the reading
// meanwhile, and the write is refused (409) instead of overwriting it.
export async function up(knex: Knex) {
  await knex.schema.alterTable('teardown_measurements', (t) => {
    t.integer('version').unsigned().notNullable().defaultTo(1)
  })
  await knex.schema.alterTable('oil_samples', (t) => {
    t.integer('version').unsigned().notNullable().defaultTo(1)
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('oil_samples', (t) => {
    t.dropColumn('version')
  })
  await knex.schema.alterTable('teardown_measurements', (t) => {
    t.dropColumn('version')
  })
}
