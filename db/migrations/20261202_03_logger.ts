import type { Knex } from 'knex'

// Named column mappings per team, matched to the next file by its header.
export async function up(knex: Knex) {
  await knex.schema.createTable('logger_profiles', (t) => {
    t.increments('id')
    t.integer('team_id').unsigned().notNullable().references('organisations.id')
    t.string('name', 80).notNullable()
    t.string('header_signature', 500).notNullable()
    t.json('mapping').notNullable()
    t.integer('created_by').unsigned().nullable().references('users.id')
    t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now())
    t.unique(['team_id', 'name'])
    t.index(['team_id', 'header_signature'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('logger_profiles')
}
