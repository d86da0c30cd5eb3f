import type { Knex } from 'knex'

// Alerts, recipients, outbox, task runs.
export async function up(_knex: Knex) {}

export async function down(_knex: Knex) {}
