import type { Knex } from 'knex'
import * as foundation from './20261202_01_foundation'
import * as fleet from './20261202_02_fleet'

// Imported statically so the built server, the CLI and the tests run the same migrations.
const migrations: Record<string, Knex.Migration> = {
  '20261202_01_foundation': foundation,
  '20261202_02_fleet': fleet,
}

export const migrationSource: Knex.MigrationSource<string> = {
  getMigrations: async () => Object.keys(migrations).sort(),
  getMigrationName: (name) => name,
  getMigration: async (name) => migrations[name]!,
}

export async function migrateLatest(knex: Knex) {
  return knex.migrate.latest({ migrationSource })
}
