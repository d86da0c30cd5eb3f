import type { Knex } from 'knex'

// The engine type sheet multiplies the reciprocating mass into inertia forces: the database itself
// refuses a mass that is zero or negative (empty stays allowed: no forces on the sheet).
const CONSTRAINT = 'engine_types_reciprocating_mass_positive'

export async function up(knex: Knex) {
  // Named first, so a bad row stops the migration with the engine type to fix, not a bare DDL error.
  const bad = await knex('engine_types').where('reciprocating_mass_kg', '<=', 0).pluck('code')
  if (bad.length) throw new Error(`reciprocating_mass_kg must be above zero or empty; fix engine type(s) ${bad.join(', ')} first`)
  await knex.raw(`ALTER TABLE engine_types ADD CONSTRAINT ${CONSTRAINT} CHECK (reciprocating_mass_kg IS NULL OR reciprocating_mass_kg > 0)`)
}

export async function down(knex: Knex) {
  await knex.raw(`ALTER TABLE engine_types DROP CONSTRAINT ${CONSTRAINT}`)
}
