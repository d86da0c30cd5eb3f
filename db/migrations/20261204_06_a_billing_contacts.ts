import type { Knex } from 'knex'

// Who a statement is addressed to: the billing contact and postal address of a team, and the
// supplier's own address for the invoice header.
export async function up(knex: Knex) {
  await knex.schema.alterTable('organisations', (t) => {
    t.string('billing_email', 190).nullable()
    t.string('billing_address', 500).nullable()
    t.string('tax_id', 40).nullable()
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('organisations', (t) => {
    t.dropColumn('billing_email')
    t.dropColumn('billing_address')
    t.dropColumn('tax_id')
  })
}
