import type { Knex } from 'knex'

// Server-side sign-in sessions. The sealed cookie names one row here; the guard reads it (by its
// primary key, joined with the user) on every request, so ending a row ends that session on every
// instance at once: sign-out, sign out everywhere, idle and absolute timeouts, a new role or password.
export async function up(knex: Knex) {
  await knex.schema.createTable('auth_sessions', (t) => {
    // 32 random bytes, base64url (43 characters), compared byte for byte; it travels only inside
    // the sealed (encrypted, signed) cookie.
    t.specificType('id', 'VARCHAR(64) CHARACTER SET ascii COLLATE ascii_bin').primary()
    t.integer('user_id').unsigned().notNullable().references('users.id').onDelete('CASCADE')
    t.timestamp('created_at', { precision: 3 }).notNullable()
    t.timestamp('last_seen_at', { precision: 3 }).notNullable()
    // Absolute end: created_at + the configured lifetime, fixed at sign-in.
    t.timestamp('expires_at', { precision: 3 }).notNullable()
    t.timestamp('ended_at', { precision: 3 }).nullable()
    t.string('end_reason', 20).nullable()
    t.string('address', 64).nullable()
    t.string('user_agent', 200).nullable()
    t.index(['user_id', 'ended_at'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('auth_sessions')
}
