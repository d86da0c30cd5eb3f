import type { Knex } from 'knex'

// A logger file was unique across the whole database, so importing a file another team already
// held was refused with that team's session named. Two teams can hold the same file (a shared
// test), so the file is now unique per owner scope: the team that ran the session, or the
// supplier for a session of an engine held by no team. Duplicates are looked up within what the
// importing user may see (server/services/logger-import.ts).
export async function up(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.integer('file_scope_id').unsigned().nullable()
  })
  await knex.raw('UPDATE sessions s JOIN engines e ON e.id = s.engine_id SET s.file_scope_id = COALESCE(s.team_id, e.supplier_id)')
  await knex.schema.alterTable('sessions', (t) => {
    t.dropUnique(['file_sha256'])
  })
  await knex.schema.alterTable('sessions', (t) => {
    t.unique(['file_scope_id', 'file_sha256'], { indexName: 'sessions_file_scope_sha256_unique' })
    t.index(['file_sha256'], 'sessions_file_sha256_index')
  })
}

// Down fails while two scopes hold the same file: the global unique index cannot come back then.
export async function down(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.dropIndex(['file_sha256'], 'sessions_file_sha256_index')
    t.dropUnique(['file_scope_id', 'file_sha256'], 'sessions_file_scope_sha256_unique')
  })
  await knex.schema.alterTable('sessions', (t) => {
    t.dropColumn('file_scope_id')
    t.unique(['file_sha256'])
  })
}
