import type { Knex } from 'knex'

const TEARDOWN_REASONS = ['life due', 'over-rev inspection', 'oil alarm', 'failure', 'scheduled'] as const
const TEARDOWN_STATES = ['open', 'awaiting sign-off', 'signed off'] as const

// Teardowns, measurements, findings, photos, swaps and sign-off.
// Swaps reuse installations (the build history); teardown_swaps links the closed and the opened row.
export async function up(knex: Knex) {
  await knex.schema.createTable('teardowns', (t) => {
    t.increments('id')
    t.integer('engine_id').unsigned().notNullable().references('engines.id')
    t.enum('reason', [...TEARDOWN_REASONS]).notNullable()
    t.integer('opened_by').unsigned().notNullable().references('users.id')
    t.timestamp('opened_at', { precision: 3 }).notNullable()
    t.enum('state', [...TEARDOWN_STATES]).notNullable().defaultTo('open')
    t.integer('signed_by').unsigned().nullable().references('users.id')
    t.timestamp('signed_at', { precision: 3 }).nullable()
    t.string('note', 2000).nullable()
    t.index(['engine_id', 'opened_at'])
  })
  // At most one teardown per engine that is not signed off.
  await knex.raw("ALTER TABLE teardowns ADD COLUMN open_flag TINYINT AS (IF(state <> 'signed off', 1, NULL)) PERSISTENT")
  await knex.raw('CREATE UNIQUE INDEX teardowns_engine_open ON teardowns (engine_id, open_flag)')

  await knex.schema.createTable('teardown_measurements', (t) => {
    t.increments('id')
    t.integer('teardown_id').unsigned().notNullable().references('teardowns.id').onDelete('CASCADE')
    t.integer('component_id').unsigned().notNullable().references('components.id')
    t.string('characteristic_key', 60).notNullable()
    t.decimal('value', 14, 6).notNullable()
    t.string('unit', 10).notNullable()
    t.enum('verdict', ['in', 'low', 'high']).notNullable()
    t.integer('measured_by').unsigned().notNullable().references('users.id')
    t.timestamp('at', { precision: 3 }).notNullable()
    t.unique(['teardown_id', 'component_id', 'characteristic_key'], { indexName: 'td_measurements_one_per_key' })
    t.index(['component_id', 'characteristic_key'])
  })

  await knex.schema.createTable('teardown_findings', (t) => {
    t.increments('id')
    t.integer('teardown_id').unsigned().notNullable().references('teardowns.id').onDelete('CASCADE')
    t.integer('component_id').unsigned().notNullable().references('components.id')
    t.string('position', 40).notNullable()
    t.string('condition', 40).notNullable()
    t.string('note', 2000).nullable()
    t.enum('disposition', ['refit', 'replace', 'scrap', 'quarantine', 'send-to-lab']).notNullable()
    t.integer('created_by').unsigned().notNullable().references('users.id')
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.unique(['teardown_id', 'component_id'], { indexName: 'td_findings_one_per_part' })
  })

  await knex.schema.createTable('teardown_photos', (t) => {
    t.increments('id')
    t.integer('finding_id').unsigned().notNullable().references('teardown_findings.id').onDelete('CASCADE')
    t.string('storage_key', 120).notNullable().unique()
    t.string('content_type', 40).notNullable()
    t.integer('size_bytes').unsigned().notNullable()
    t.integer('width').unsigned().nullable()
    t.integer('height').unsigned().nullable()
    // No downscaled copy is made (no native image library): the original is shown scaled by the browser.
    t.string('thumbnail_key', 120).nullable()
    t.string('original_name', 255).nullable()
    t.integer('uploaded_by').unsigned().notNullable().references('users.id')
    t.timestamp('uploaded_at', { precision: 3 }).notNullable()
  })

  await knex.schema.createTable('teardown_swaps', (t) => {
    t.increments('id')
    t.integer('teardown_id').unsigned().notNullable().references('teardowns.id')
    t.string('position', 40).notNullable()
    t.integer('removed_installation_id').unsigned().nullable().references('installations.id')
    t.integer('fitted_installation_id').unsigned().notNullable().references('installations.id')
    t.enum('removed_status', ['serviceable', 'quarantined', 'scrapped']).notNullable()
    t.string('reason', 500).notNullable()
    // Set when the fitted part was projected not to have life for the next event and someone went ahead anyway.
    t.string('life_warning', 500).nullable()
    t.string('override_reason', 500).nullable()
    t.integer('swapped_by').unsigned().notNullable().references('users.id')
    t.timestamp('at', { precision: 3 }).notNullable()
  })
}

export async function down(knex: Knex) {
  for (const table of ['teardown_swaps', 'teardown_photos', 'teardown_findings', 'teardown_measurements', 'teardowns']) {
    await knex.schema.dropTableIfExists(table)
  }
}
