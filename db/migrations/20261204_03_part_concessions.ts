import type { Knex } from 'knex'

// A part's state after removal is kept with its installation (back-to-birth history), and the
// supplier's releases of held or over-limit parts (concessions) with any limit set for that serial.
export async function up(knex: Knex) {
  await knex.schema.alterTable('installations', (t) => {
    t.enum('removed_status', ['serviceable', 'quarantined', 'scrapped']).nullable()
  })
  // Removals made in teardowns already recorded the state; carry it over so the history shows it.
  await knex.raw('UPDATE installations i JOIN teardown_swaps s ON s.removed_installation_id = i.id SET i.removed_status = s.removed_status')
  // The limits that apply to this serial instead of its type's, set by the latest concession that gave any.
  await knex.schema.alterTable('components', (t) => {
    t.json('serial_limits').nullable()
  })
  await knex.schema.createTable('part_concessions', (t) => {
    t.increments('id')
    t.integer('component_id').unsigned().notNullable().references('components.id')
    t.integer('granted_by').unsigned().notNullable().references('users.id')
    t.timestamp('granted_at', { precision: 3 }).notNullable()
    t.string('reason', 2000).notNullable()
    t.string('status_before', 20).notNullable()
    t.string('status_after', 20).notNullable()
    // Life used at the time, by the limits that applied then (a record, never read back into life).
    t.decimal('fraction_before', 10, 6).nullable()
    t.decimal('limit_hours', 12, 3).nullable()
    t.decimal('limit_km', 12, 1).nullable()
    t.decimal('limit_eq_hours', 12, 3).nullable()
    t.json('limit_over_rev').nullable()
    t.json('finding_ids').notNullable()
    t.index(['component_id', 'granted_at'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('part_concessions')
  await knex.schema.alterTable('components', (t) => t.dropColumn('serial_limits'))
  await knex.schema.alterTable('installations', (t) => t.dropColumn('removed_status'))
}
