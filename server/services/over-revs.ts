// Over-rev verdicts are decided once and stored with each event; when an engine type's bands are
// edited they are decided again from the stored events (their time-at-rpm profiles), in the same
// transaction as the edit, and the change is audited session by session.
import type { Knex } from 'knex'
import { reclassifyEvents, type OverRevBandRule, type OverRevEvent } from '#shared/domain/over-rev'
import type { Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { json } from '../utils/db'

export async function reclassifyOverRevs(trx: Knex.Transaction, actor: Actor, engineTypeId: number, bands: OverRevBandRule[]) {
  const rows = await trx('sessions as s')
    .join('engines as e', 'e.id', 's.engine_id')
    .where('e.engine_type_id', engineTypeId)
    .whereRaw("JSON_LENGTH(s.over_revs) > 0")
    .forUpdate()
    .select('s.id', 's.over_revs')
  let changedSessions = 0
  for (const r of rows) {
    const before = json<OverRevEvent[]>(r.over_revs, [])
    const after = reclassifyEvents(before, bands)
    if (JSON.stringify(before) === JSON.stringify(after)) continue
    changedSessions++
    await trx('sessions').where('id', r.id).update({ over_revs: JSON.stringify(after) })
    await audit(trx, actor, {
      entity: 'session',
      entityId: r.id,
      action: 'reclassify-over-revs',
      before: before.map(({ bandId, peakRpm, startS }) => ({ bandId, peakRpm, startS })),
      after: after.map(({ bandId, peakRpm, startS }) => ({ bandId, peakRpm, startS })),
    })
  }
  return { sessions: rows.length, changedSessions }
}
