import type { Knex } from 'knex'

// The supplier workshop's rebuilds per week (a default, and weeks set apart), and the rebuilds an
// accepted allocation books into it, so one team's plan leaves the others' bookings counted.
export async function up(knex: Knex) {
  await knex.schema.alterTable('organisations', (t) => {
    t.integer('workshop_rebuilds_per_week').unsigned().nullable()
  })
  await knex.schema.createTable('workshop_weeks', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.date('week_start').notNullable()
    t.integer('rebuilds').unsigned().notNullable()
    t.unique(['supplier_id', 'week_start'])
  })
  await knex.schema.createTable('planned_rebuilds', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.integer('team_id').unsigned().notNullable().references('organisations.id')
    t.integer('engine_id').unsigned().notNullable().references('engines.id')
    t.integer('before_event_id').unsigned().notNullable().references('events.id').onDelete('CASCADE')
    t.date('week_start').notNullable()
    t.unique(['engine_id', 'before_event_id'])
    t.index(['supplier_id', 'week_start'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('planned_rebuilds')
  await knex.schema.dropTableIfExists('workshop_weeks')
  await knex.schema.alterTable('organisations', (t) => {
    t.dropColumn('workshop_rebuilds_per_week')
  })
}
