import type { Knex } from 'knex'

// A session filed in error is voided rather than deleted: it stays readable and audited, stops
// counting towards life, and can be restored. Reason and who voided it are kept on the row.
export async function up(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.timestamp('voided_at', { precision: 3 }).nullable()
    t.integer('voided_by').unsigned().nullable().references('users.id')
    t.string('void_reason', 500).nullable()
    t.index(['voided_at'], 'sessions_voided_at_index')
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.dropIndex(['voided_at'], 'sessions_voided_at_index')
    t.dropForeign(['voided_by'])
    t.dropColumn('void_reason')
    t.dropColumn('voided_by')
    t.dropColumn('voided_at')
  })
}
