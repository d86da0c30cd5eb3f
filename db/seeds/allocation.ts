// Demo entries for the engine allocation: the invented touring team's two cars in each coming
// touring round, three and a half hours of running per car over the weekend (practice,
// qualifying and races; an invented figure), and the supplier workshop's rebuilds per week. The
// team's engines cannot carry every round on their present builds, so the plan shows a rebuild.
import type { Knex } from 'knex'

const TEAM = 'Redfern Lattice Racing'
const CARS = ['RLR-T-31', 'RLR-T-32']
const SERIES = 'Coastline Touring Cup'

export async function seedAllocation(trx: Knex.Transaction, ctx: { supplierId: number; teams: Record<string, number>; now: Date }) {
  await trx('organisations').where('id', ctx.supplierId).update({ workshop_rebuilds_per_week: 1 })
  const teamId = ctx.teams[TEAM]!
  const coming = await trx('events').where({ supplier_id: ctx.supplierId, series: SERIES }).where('starts_at', '>', ctx.now).orderBy('starts_at').select('id')
  const rows = coming.flatMap((ev: { id: number }) => CARS.map((chassis) => ({ event_id: ev.id, team_id: teamId, chassis, planned_seconds: 3.5 * 3600 })))
  if (rows.length) await trx('event_entries').insert(rows)
}
