import type { Knex } from 'knex'

// Teardowns, measurements, findings, photos, sign-off.
export async function up(_knex: Knex) {}

export async function down(_knex: Knex) {}
