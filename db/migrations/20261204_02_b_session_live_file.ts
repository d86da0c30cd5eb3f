import type { Knex } from 'knex'

// A logger file is unique per owner scope among the sessions that count: once a wrong import is
// voided, the same file can be imported again against the right engine or event. The generated
// column is NULL for a voided session, and a unique index ignores NULLs. The index keeps its name,
// which the import looks for when it turns a lost race into a clear 409.
export async function up(knex: Knex) {
  await knex.raw('ALTER TABLE sessions ADD COLUMN live_file_sha256 VARCHAR(64) AS (IF(voided_at IS NULL, file_sha256, NULL)) PERSISTENT')
  await knex.raw('ALTER TABLE sessions DROP INDEX sessions_file_scope_sha256_unique')
  await knex.raw('CREATE UNIQUE INDEX sessions_file_scope_sha256_unique ON sessions (file_scope_id, live_file_sha256)')
}

// Down fails while a voided session and a live one of the same scope hold the same file.
export async function down(knex: Knex) {
  await knex.raw('ALTER TABLE sessions DROP INDEX sessions_file_scope_sha256_unique')
  await knex.raw('CREATE UNIQUE INDEX sessions_file_scope_sha256_unique ON sessions (file_scope_id, file_sha256)')
  await knex.raw('ALTER TABLE sessions DROP COLUMN live_file_sha256')
}
