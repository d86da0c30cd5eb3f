import type { Knex } from 'knex'

// The supplier engineer's reading of a teardown finding for the field evidence: which failure mode
// it was, or that it was no failure. One row per classified finding; a finding without a row is
// not yet classified.
export async function up(knex: Knex) {
  await knex.schema.createTable('finding_failure_modes', (t) => {
    t.integer('finding_id').unsigned().primary().references('teardown_findings.id').onDelete('CASCADE')
    t.string('failure_mode', 40).notNullable()
    t.integer('classified_by').unsigned().notNullable().references('users.id')
    t.timestamp('classified_at', { precision: 3 }).notNullable()
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('finding_failure_modes')
}
