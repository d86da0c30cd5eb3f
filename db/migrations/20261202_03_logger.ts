import type { Knex } from 'knex'

// Logger profiles and stored files.
export async function up(_knex: Knex) {}

export async function down(_knex: Knex) {}
