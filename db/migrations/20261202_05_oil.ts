import type { Knex } from 'knex'

// Oil samples, lab mappings, oil limits.
export async function up(_knex: Knex) {}

export async function down(_knex: Knex) {}
