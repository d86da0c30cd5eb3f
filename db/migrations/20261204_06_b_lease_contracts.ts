import type { Knex } from 'knex'

// Lease contracts per team and engine (or engine type), and the findings the supplier marks as
// charged to the team. Money in integer minor units (BIGINT), never DECIMAL or FLOAT.
export async function up(knex: Knex) {
  await knex.schema.createTable('lease_contracts', (t) => {
    t.increments('id')
    t.integer('supplier_id').unsigned().notNullable().references('organisations.id')
    t.integer('team_id').unsigned().notNullable().references('organisations.id')
    t.integer('engine_id').unsigned().nullable().references('engines.id')
    t.integer('engine_type_id').unsigned().nullable().references('engine_types.id')
    t.date('valid_from').notNullable()
    t.date('valid_to').notNullable()
    t.specificType('currency', 'CHAR(3)').notNullable()
    t.enum('fee_basis', ['season', 'event']).notNullable()
    t.bigInteger('fee_minor').notNullable()
    t.enum('allowance_unit', ['km', 'h']).notNullable()
    t.integer('allowance').unsigned().notNullable()
    t.bigInteger('overage_rate_minor').notNullable()
    t.json('rebuild_charges').notNullable()
    t.json('over_rev_charges').notNullable()
    t.json('damage_charges').notNullable()
    t.integer('tax_rate_bp').unsigned().notNullable()
    t.string('note', 500).nullable()
    t.integer('created_by').unsigned().nullable().references('users.id')
    t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'))
    t.index(['team_id', 'valid_from'])
    t.index(['supplier_id'])
  })

  await knex.schema.createTable('finding_charges', (t) => {
    t.increments('id')
    t.integer('finding_id').unsigned().notNullable().unique().references('teardown_findings.id').onDelete('CASCADE')
    t.string('reason', 500).notNullable()
    t.integer('marked_by').unsigned().notNullable().references('users.id')
    t.timestamp('marked_at', { precision: 3 }).notNullable()
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('finding_charges')
  await knex.schema.dropTableIfExists('lease_contracts')
}
