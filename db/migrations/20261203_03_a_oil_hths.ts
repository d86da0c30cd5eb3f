import type { Knex } from 'knex'

// HTHS viscosity of an oil sample (mPa s at 150 C), checked against the SAE J300 minimum of its grade.
export async function up(knex: Knex) {
  await knex.schema.alterTable('oil_samples', (t) => {
    t.decimal('hths', 8, 3).nullable().after('kv100')
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('oil_samples', (t) => {
    t.dropColumn('hths')
  })
}
