import type { Knex } from 'knex'

// A team's entries for an event (one car each, with the running planned for its engine) and the
// workshop's lead time before each event: what the engine allocation plans from.
export async function up(knex: Knex) {
  await knex.schema.alterTable('events', (t) => {
    t.integer('rebuild_lead_days').unsigned().notNullable().defaultTo(10)
  })
  await knex.schema.createTable('event_entries', (t) => {
    t.increments('id')
    t.integer('event_id').unsigned().notNullable().references('events.id').onDelete('CASCADE')
    t.integer('team_id').unsigned().notNullable().references('organisations.id')
    t.string('chassis', 40).notNullable()
    t.integer('planned_seconds').unsigned().notNullable()
    t.unique(['event_id', 'team_id', 'chassis'])
    t.index(['team_id'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('event_entries')
  await knex.schema.alterTable('events', (t) => {
    t.dropColumn('rebuild_lead_days')
  })
}
