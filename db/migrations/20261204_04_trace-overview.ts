import type { Knex } from 'knex'

// Every channel's lowest and highest value per overview bucket (shared/domain/trace/overview.ts),
// which the session page charts over time. Logger sessions stored before it have none until their
// kept raw file is read again (server/plugins/06.trace-overview.ts does that once, at start);
// until then their page charts rpm from the older overview in `details`.
export async function up(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.specificType('trace_overview', 'MEDIUMTEXT').nullable()
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.dropColumn('trace_overview')
  })
}
