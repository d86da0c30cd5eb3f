// Demo teardowns: scheduled inspections between rounds on two engines, signed off by a second
// person, with readings that open up with running hours, so that the wear trends, the teardown
// reports and the fleet findings have something to show. Rates and findings are invented.
import type { Knex } from 'knex'
import { judge, type Characteristic } from '../../shared/domain/teardown'
import { json } from '../values'
import { rng } from '../fixtures'

const DAY = 86_400_000

/** Wear per running hour, in the characteristic's unit: clearances open, diameters and free lengths shrink. */
const WEAR_PER_HOUR: Record<string, number> = {
  main_journal_d: -0.0002,
  crankpin_d: -0.00025,
  main_clearance: 0.0004,
  big_end_ovality: 0.00012,
  small_end_bore: 0.0001,
  bolt_stretch: 0.0001,
  big_end_clearance: 0.0004,
  piston_clearance: 0.0004,
  ring_gap: 0.003,
  spring_free_length: -0.008,
}

/** Engines, the past rounds after which each was opened, and what the mechanics noted at the last one. */
const PLAN = [
  { serial: 'KT4-2201', afterRounds: [2, 4, 6], finding: { position: 'rod-3', condition: 'fretted', note: 'Light fretting on the big-end cap joint face, within limits: cleaned and refitted' } },
  { serial: 'KV8-1202', afterRounds: [2, 5], finding: { position: 'piston-2', condition: 'normal wear', note: 'Skirt coating worn through at the thrust side, as expected at these hours: refitted' } },
] as const

export async function seedTeardowns(trx: Knex.Transaction) {
  const rand = rng(4406)
  const opener = await trx('users').where('email', 'workshop@keelbrook.test').first('id')
  const signer = await trx('users').where('email', 'engineer@keelbrook.test').first('id')
  for (const plan of PLAN) {
    const engine = await trx('engines').where('serial', plan.serial).first('id')
    const sessions = await trx('sessions').where('engine_id', engine.id).orderBy('started_at').select('started_at', 'running_seconds', 'event_id')
    const rounds = [...new Set(sessions.map((s) => s.event_id))]
    const parts = await trx('installations as i')
      .join('components as c', 'c.id', 'i.component_id')
      .join('component_types as ct', 'ct.id', 'c.component_type_id')
      .where('i.engine_id', engine.id)
      .whereNull('i.to_at')
      .select('i.position', 'i.component_id', 'ct.characteristics')
    // each part wears at its own pace around the type's rate
    const pace = new Map(parts.map((p) => [p.component_id, 0.8 + 0.4 * rand()]))
    let lastSigned: Date | null = null
    for (const [k, round] of plan.afterRounds.entries()) {
      const roundSessions = sessions.filter((s) => s.event_id === rounds[round - 1])
      const openedAt = new Date(new Date(roundSessions[roundSessions.length - 1].started_at).getTime() + 2 * DAY)
      const hours = sessions.filter((s) => new Date(s.started_at) < openedAt).reduce((t, s) => t + Number(s.running_seconds), 0) / 3600
      const signedAt = new Date(openedAt.getTime() + DAY)
      const [teardownId] = await trx('teardowns').insert({
        engine_id: engine.id,
        reason: 'scheduled',
        opened_by: opener.id,
        opened_at: openedAt,
        state: 'signed off',
        signed_by: signer.id,
        signed_at: signedAt,
        note: `Scheduled inspection after round ${round}`,
      })
      for (const p of parts) {
        const chars = json<Characteristic[]>(p.characteristics, [])
        for (const c of chars) {
          const scatter = (rand() - 0.5) * 0.1 * (c.max - c.min)
          const value = Number((c.nominal + (WEAR_PER_HOUR[c.key] ?? 0) * pace.get(p.component_id)! * hours + scatter).toFixed(4))
          await trx('teardown_measurements').insert({
            teardown_id: teardownId,
            component_id: p.component_id,
            characteristic_key: c.key,
            value,
            unit: c.unit,
            verdict: judge(value, c).verdict,
            measured_by: opener.id,
            at: new Date(openedAt.getTime() + 3 * 3600_000),
          })
        }
      }
      if (k === plan.afterRounds.length - 1) {
        const part = parts.find((p) => p.position === plan.finding.position)!
        await trx('teardown_findings').insert({
          teardown_id: teardownId,
          component_id: part.component_id,
          position: plan.finding.position,
          condition: plan.finding.condition,
          note: plan.finding.note,
          disposition: 'refit',
          created_by: opener.id,
          created_at: new Date(openedAt.getTime() + 4 * 3600_000),
        })
      }
      lastSigned = signedAt
    }
    // as a sign-off does: the engine counts as rebuilt then, and its parts' inspections are cleared
    await trx('engines').where('id', engine.id).update({ rebuilt_at: lastSigned })
    await trx('components').whereIn('id', parts.map((p) => p.component_id)).update({ inspection_cleared_at: lastSigned })
  }
}
