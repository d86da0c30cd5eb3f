import type { Knex } from 'knex'

// Where each account last signed in successfully. While an address is locked by the failures of
// many accounts (one NAT or proxy), an account that signed in from that address before is judged
// by its own per-account throttle only, so a team is not locked out by someone else's guessing.
export async function up(knex: Knex) {
  await knex.schema.createTable('sign_in_addresses', (t) => {
    t.integer('user_id').unsigned().notNullable().references('users.id').onDelete('CASCADE')
    t.string('address', 64).notNullable()
    t.timestamp('last_success_at').notNullable()
    t.primary(['user_id', 'address'])
  })
}

export async function down(knex: Knex) {
  await knex.schema.dropTableIfExists('sign_in_addresses')
}
