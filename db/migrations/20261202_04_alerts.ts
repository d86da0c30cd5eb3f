import type { Knex } from 'knex'

// Alerts, recipients, acknowledgements, outbox, task runs.
// The scheduled-task lock is MariaDB's GET_LOCK (held by a connection, freed if it dies), so no lease table.
export async function up(knex: Knex) {
  await knex.schema.createTable('task_runs', (t) => {
    t.bigIncrements('id')
    t.string('task', 40).notNullable()
    t.string('instance', 120).notNullable()
    t.enum('outcome', ['running', 'ok', 'skipped', 'error']).notNullable().defaultTo('running')
    t.timestamp('started_at', { precision: 3 }).notNullable()
    t.timestamp('finished_at', { precision: 3 }).nullable()
    t.integer('findings').unsigned().notNullable().defaultTo(0)
    t.integer('alerts_created').unsigned().notNullable().defaultTo(0)
    t.integer('mails_queued').unsigned().notNullable().defaultTo(0)
    t.integer('mails_sent').unsigned().notNullable().defaultTo(0)
    t.integer('mails_failed').unsigned().notNullable().defaultTo(0)
    t.string('error', 1000).nullable()
    t.index(['task', 'started_at'])
  })

  await knex.schema.createTable('alerts', (t) => {
    t.bigIncrements('id')
    // One finding per part or engine, kind, level and life cycle: the database refuses a second one,
    // so two concurrent runs cannot both alert.
    t.string('alert_key', 190).notNullable().unique()
    t.string('kind', 40).notNullable()
    t.string('level', 20).notNullable()
    t.integer('engine_id').unsigned().notNullable().references('engines.id')
    t.integer('component_id').unsigned().nullable().references('components.id')
    // Owner at the time of the finding: an engine later leased to another team keeps its old alerts with the old team.
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.integer('team_id').unsigned().nullable().references('organisations.id')
    t.string('title', 300).notNullable()
    t.json('details').notNullable()
    t.bigInteger('task_run_id').unsigned().nullable().references('task_runs.id')
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.index(['supplier_id', 'created_at'])
    t.index(['team_id', 'created_at'])
    t.index(['engine_id'])
  })

  await knex.schema.createTable('mail_outbox', (t) => {
    t.bigIncrements('id')
    t.bigInteger('alert_id').unsigned().nullable().references('alerts.id')
    t.integer('user_id').unsigned().nullable().references('users.id')
    t.string('to_address', 190).notNullable()
    t.string('subject', 300).notNullable()
    t.text('html', 'mediumtext').notNullable()
    t.text('text', 'mediumtext').notNullable()
    t.enum('state', ['pending', 'sent', 'failed']).notNullable().defaultTo('pending')
    t.integer('attempts').unsigned().notNullable().defaultTo(0)
    t.timestamp('next_attempt_at', { precision: 3 }).notNullable()
    t.string('last_error', 1000).nullable()
    t.timestamp('sent_at', { precision: 3 }).nullable()
    // A deliverer claims a row before sending, so two instances never send the same mail.
    t.string('claimed_by', 64).nullable()
    t.timestamp('claimed_until', { precision: 3 }).nullable()
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.index(['state', 'next_attempt_at'])
  })

  await knex.schema.createTable('alert_recipients', (t) => {
    t.bigIncrements('id')
    t.bigInteger('alert_id').unsigned().notNullable().references('alerts.id').onDelete('CASCADE')
    t.integer('user_id').unsigned().notNullable().references('users.id')
    t.boolean('by_email').notNullable()
    t.bigInteger('outbox_id').unsigned().nullable().references('mail_outbox.id')
    t.unique(['alert_id', 'user_id'])
    t.index(['user_id'])
  })

  await knex.schema.createTable('alert_acks', (t) => {
    t.bigIncrements('id')
    t.bigInteger('alert_id').unsigned().notNullable().references('alerts.id').onDelete('CASCADE')
    t.integer('user_id').unsigned().notNullable().references('users.id')
    t.timestamp('at', { precision: 3 }).notNullable()
    t.string('comment', 1000).notNullable().defaultTo('')
    t.unique(['alert_id', 'user_id'])
  })
}

export async function down(knex: Knex) {
  for (const table of ['alert_acks', 'alert_recipients', 'mail_outbox', 'alerts', 'task_runs']) await knex.schema.dropTableIfExists(table)
}
