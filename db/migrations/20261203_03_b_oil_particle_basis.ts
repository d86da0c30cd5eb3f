import type { Knex } from 'knex'

// The volume a lab's particle counts refer to; ISO 4406 reads per mL, so per 100 mL is converted on import.
export async function up(knex: Knex) {
  await knex.schema.alterTable('oil_lab_mappings', (t) => {
    t.enum('particle_basis', ['per_ml', 'per_100ml']).notNullable().defaultTo('per_ml').after('mapping')
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('oil_lab_mappings', (t) => {
    t.dropColumn('particle_basis')
  })
}
