import type { Knex } from 'knex'

// One alert per engine and cause, listing its parts; mail as a digest per recipient and run, with
// urgent levels also at once. Exactly once is kept by unique keys: a part's finding (alert_parts.item_key)
// is recorded once, and a notice is queued into one digest and one immediate mail at most.
export async function up(knex: Knex) {
  await knex.schema.alterTable('alerts', (t) => {
    // e.g. "life:Crank drive", "over-rev", "forecast:12", "oil"
    t.string('cause', 80).notNullable().defaultTo('')
    t.string('cause_label', 120).notNullable().defaultTo('')
    // engine, cause and level: the parts of one finding join the group's open alert
    t.string('group_key', 190).nullable()
    t.timestamp('updated_at', { precision: 3 }).nullable()
    t.index(['group_key'])
  })

  await knex.schema.createTable('alert_parts', (t) => {
    t.bigIncrements('id')
    t.bigInteger('alert_id').unsigned().notNullable().references('alerts.id').onDelete('CASCADE')
    // One per part, kind, level and life cycle (the former alert key): never recorded twice.
    t.string('item_key', 190).notNullable().unique()
    t.integer('component_id').unsigned().nullable().references('components.id')
    t.json('details').notNullable()
    t.bigInteger('task_run_id').unsigned().nullable().references('task_runs.id')
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.index(['alert_id'])
  })

  await knex.schema.alterTable('mail_outbox', (t) => {
    t.string('kind', 12).notNullable().defaultTo('alert') // alert (one per alert, before), urgent, digest
  })

  await knex.schema.createTable('alert_notices', (t) => {
    t.bigIncrements('id')
    t.bigInteger('alert_id').unsigned().notNullable().references('alerts.id').onDelete('CASCADE')
    t.integer('user_id').unsigned().notNullable().references('users.id')
    t.bigInteger('task_run_id').unsigned().nullable().references('task_runs.id')
    t.enum('change', ['new', 'added']).notNullable()
    t.integer('parts_added').unsigned().notNullable().defaultTo(0)
    t.enum('digest_state', ['pending', 'queued', 'off']).notNullable()
    t.bigInteger('digest_outbox_id').unsigned().nullable().references('mail_outbox.id').onDelete('SET NULL')
    t.enum('immediate_state', ['pending', 'queued', 'off']).notNullable()
    t.bigInteger('immediate_outbox_id').unsigned().nullable().references('mail_outbox.id').onDelete('SET NULL')
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.index(['digest_state', 'user_id'])
    t.index(['immediate_state', 'user_id'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('alert_notices')
  await knex.schema.dropTableIfExists('alert_parts')
  await knex.schema.alterTable('mail_outbox', (t) => t.dropColumn('kind'))
  await knex.schema.alterTable('alerts', (t) => {
    t.dropIndex(['group_key'])
    t.dropColumns('cause', 'cause_label', 'group_key', 'updated_at')
  })
}
