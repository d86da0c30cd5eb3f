import type { Knex } from 'knex'

export async function up(knex: Knex) {
  await knex.schema.createTable('organisations', (t) => {
    t.increments('id')
    t.string('name', 120).notNullable().unique()
    t.enum('kind', ['supplier', 'team']).notNullable()
    // A team leases its engines from one supplier.
    t.integer('supplier_id').unsigned().nullable().references('organisations.id')
    t.timestamp('created_at').notNullable().defaultTo(knex.fn.now())
  })

  await knex.schema.createTable('users', (t) => {
    t.increments('id')
    t.integer('organisation_id').unsigned().notNullable().references('organisations.id')
    t.string('email', 190).notNullable().unique()
    t.string('name', 120).notNullable()
    t.enum('role', ['admin', 'supplier_engineer', 'team_manager', 'race_engineer', 'mechanic']).notNullable()
    t.string('password_hash', 255).notNullable()
    t.boolean('active').notNullable().defaultTo(true)
    // Bumped on deactivation, role change and password change: older session cookies stop working.
    t.integer('session_version').unsigned().notNullable().defaultTo(1)
    t.json('alert_prefs').nullable()
    t.timestamp('created_at').notNullable().defaultTo(knex.fn.now())
    t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now())
    t.index(['organisation_id'])
  })

  // Throttling state lives in the database so that it holds across app instances.
  await knex.schema.createTable('sign_in_throttle', (t) => {
    t.string('throttle_key', 220).primary()
    t.integer('failures').unsigned().notNullable().defaultTo(0)
    t.timestamp('window_started_at').notNullable().defaultTo(knex.fn.now())
    t.timestamp('locked_until').nullable()
  })

  await knex.schema.createTable('audit_log', (t) => {
    t.bigIncrements('id')
    t.timestamp('at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'))
    t.integer('user_id').unsigned().nullable().references('users.id')
    t.integer('organisation_id').unsigned().nullable()
    t.string('entity', 60).notNullable()
    t.string('entity_id', 60).notNullable()
    t.string('action', 60).notNullable()
    t.json('before_value').nullable()
    t.json('after_value').nullable()
    t.index(['entity', 'entity_id'])
    t.index(['at'])
  })
}

export async function down(knex: Knex) {
  for (const table of ['audit_log', 'sign_in_throttle', 'users', 'organisations']) await knex.schema.dropTableIfExists(table)
}
