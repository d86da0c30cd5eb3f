import type { Knex } from 'knex'

// Exact equivalent hours: each session read from a logger file keeps its running time as ln(rpm)
// moments (binary, see shared/domain/rpm-moments.ts). Sessions stored before this have none until
// their kept raw file is read again (server/plugins/05.exact-life.ts does that once, at start).
export async function up(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.specificType('rpm_moments', 'MEDIUMBLOB').nullable()
  })
}

export async function down(knex: Knex) {
  await knex.schema.alterTable('sessions', (t) => {
    t.dropColumn('rpm_moments')
  })
}
