// Demo field evidence: the supplier's winter valve-spring endurance programme on the KV8-1001
// block, before that engine was built up for the season. Spring sets ran on the dyno until they
// failed or were retired, each removal a signed-off teardown with its finding, and the supplier
// engineer classified each finding as a failure mode or as none. Lives, outcomes and notes are invented.
import type { Knex } from 'knex'
import { eqCacheOf, momentsOfSegments } from '../../shared/domain/rpm-moments'
import { momentsBlob } from '../fixtures'

const DAY = 86_400_000
const HOUR = 3_600_000
/** A dyno cycle of steady segments (share of running time, rpm) around the KV8-45's 8,500 rpm reference. */
const DYNO_CYCLE = [
  { share: 0.3, rpm: 7000 },
  { share: 0.45, rpm: 8300 },
  { share: 0.25, rpm: 9000 },
]
const SESSION_HOURS = 8
const BAND_WIDTH_RPM = 500

type Outcome = { condition: string; disposition: 'scrap' | 'send-to-lab' | 'quarantine'; mode: string | null; note: string; reason: 'failure' | 'life due' | 'scheduled' }
const CRACK: Outcome = { condition: 'cracked', disposition: 'send-to-lab', mode: 'fatigue crack', reason: 'failure', note: 'Coil fracture at the ground end of one inner spring; set sent to the lab' }
const LOAD: Outcome = { condition: 'worn to limit', disposition: 'scrap', mode: 'loss of load', reason: 'failure', note: 'Seat load below minimum on three springs of the set' }
const RETIRED: Outcome = { condition: 'normal wear', disposition: 'scrap', mode: 'not a failure', reason: 'scheduled', note: 'Retired from the programme without a defect; crack-tested clear' }
const AT_LIMIT: Outcome = { condition: 'normal wear', disposition: 'scrap', mode: 'not a failure', reason: 'life due', note: 'Removed at its hours limit; crack-tested clear' }
const UNREAD: Outcome = { ...RETIRED, mode: null, note: 'Removed when the rig was rebuilt; awaiting the engineer\'s review' }

/** Running hours of each spring set at its removal, in the order they ran, with what was found. */
const PROGRAMME: [hours: number, outcome: Outcome][] = [
  [38, CRACK], [66.5, AT_LIMIT], [52, CRACK], [66.5, AT_LIMIT], [71, CRACK], [44, UNREAD], [80, CRACK], [59, LOAD],
  [90, RETIRED], [63, CRACK], [77, RETIRED], [95, CRACK], [48, LOAD], [85, RETIRED], [56, CRACK],
]

export async function seedEvidence(trx: Knex.Transaction) {
  const engine = await trx('engines as e').join('engine_types as et', 'et.id', 'e.engine_type_id').where('e.serial', 'KV8-1001').first('e.id', 'e.supplier_id', 'e.built_at', 'et.reference_rpm')
  const ct = await trx('component_types').where('code', 'KV8-VSP').first('id')
  const opener = await trx('users').where('email', 'workshop@keelbrook.test').first('id')
  const engineer = await trx('users').where('email', 'engineer@keelbrook.test').first('id')
  if (!engine || !ct) return
  // the supplier's damage exponents in use, whose exact equivalent hours the fleet computation reads from each session's cache
  const exponents = (await trx('component_types').where('supplier_id', engine.supplier_id).distinct('damage_exponent')).map((r) => Number(r.damage_exponent)).filter((p) => p !== 0)
  const builtAt = new Date(engine.built_at).getTime()
  const totalHours = PROGRAMME.reduce((s, [h]) => s + h, 0)
  // the programme runs about seven hours a day, with a day's teardown between sets, and ends ten days before the build
  let clock = builtAt - 10 * DAY - Math.ceil(totalHours / 7 + PROGRAMME.length) * DAY

  const moments = (hours: number) => momentsOfSegments(DYNO_CYCLE.map((c) => ({ rpm: c.rpm, seconds: c.share * hours * 3600 })))
  const histogram = (hours: number) => {
    const h: number[] = Array(Math.floor(9000 / BAND_WIDTH_RPM) + 1).fill(0)
    for (const c of DYNO_CYCLE) {
      const band = Math.floor(c.rpm / BAND_WIDTH_RPM)
      h[band] = (h[band] ?? 0) + c.share * hours * 3600
    }
    return h
  }

  let previous: { installationId: number; teardownId: number } | null = null
  for (const [k, [hours, outcome]] of PROGRAMME.entries()) {
    const [componentId] = await trx('components').insert({
      supplier_id: engine.supplier_id,
      component_type_id: ct.id,
      serial: `KV8VSP-${3101 + k}`,
      batch: `W25-${String.fromCharCode(65 + (k % 3))}`,
      status: 'scrapped',
      born_at: new Date(clock - DAY),
    })
    const fittedAt = new Date(clock)
    const runs: { at: number; hours: number }[] = []
    for (let left = hours; left > 1e-9; left -= SESSION_HOURS) {
      const h = Math.min(SESSION_HOURS, left)
      runs.push({ at: clock + HOUR, hours: h })
      clock += (h / 7) * DAY
    }
    const openedAt = new Date(clock + 12 * HOUR)
    const signedAt = new Date(openedAt.getTime() + 8 * HOUR)
    // closed when inserted: the engine's season build holds the position open today
    const [installationId] = await trx('installations').insert({ component_id: componentId, engine_id: engine.id, position: 'springs', from_at: fittedAt, to_at: openedAt, created_by: opener.id })
    for (const run of runs) {
      const m = moments(run.hours)
      await trx('sessions').insert({
        engine_id: engine.id, team_id: null, event_id: null, kind: 'bench', started_at: new Date(run.at),
        running_seconds: Math.round(run.hours * 3600), distance_km: 0, band_width_rpm: BAND_WIDTH_RPM, histogram: JSON.stringify(histogram(run.hours)),
        rpm_moments: momentsBlob(m), eq_cache: JSON.stringify(eqCacheOf(m, engine.reference_rpm, exponents)),
        over_revs: JSON.stringify([]), low_oil_pressure: JSON.stringify([]), max_rpm: 9000, source: 'manual', file_scope_id: engine.supplier_id, created_by: opener.id,
      })
    }
    const [teardownId] = await trx('teardowns').insert({
      engine_id: engine.id, reason: outcome.reason, opened_by: opener.id, opened_at: openedAt, state: 'signed off', signed_by: engineer.id, signed_at: signedAt,
      note: `Valve-spring endurance programme: set ${k + 1} of ${PROGRAMME.length}`,
    })
    const [findingId] = await trx('teardown_findings').insert({
      teardown_id: teardownId, component_id: componentId, position: 'springs', condition: outcome.condition, note: outcome.note, disposition: outcome.disposition,
      created_by: opener.id, created_at: new Date(openedAt.getTime() + 2 * HOUR),
    })
    if (outcome.mode) await trx('finding_failure_modes').insert({ finding_id: findingId, failure_mode: outcome.mode, classified_by: engineer.id, classified_at: new Date(signedAt.getTime() + DAY) })
    if (previous) {
      // the set fitted in the teardown that removed the one before
      await trx('teardown_swaps').insert({ teardown_id: previous.teardownId, position: 'springs', removed_installation_id: previous.installationId, fitted_installation_id: installationId, removed_status: 'scrapped', reason: 'Next set of the programme', swapped_by: opener.id, at: fittedAt })
    }
    previous = { installationId: installationId!, teardownId: teardownId! }
    clock = signedAt.getTime() + DAY
  }
  // The block was rebuilt for the season after the programme: its hours since rebuild start there.
  await trx('engines').where('id', engine.id).update({ rebuilt_at: new Date(builtAt) })
}
