// Sessions in the life engine's shape for fleet-wide computations. A session's rpm moments are a
// few kB; a large fleet's would be hundreds of MB, so the computation reads each session's cache of
// exact equivalent hours for the (exponent, reference rpm) pairs in use instead, and reads moments
// only for the sessions whose cache lacks a pair (after a new session, a re-processed file, or a
// change of exponent or reference rpm), writing the filled cache back for the next computation.
import type { Knex } from 'knex'
import { eqCacheKey, eqCacheOf } from '#shared/domain/rpm-moments'
import { json } from '../utils/db'
import { momentsOf, toEngineSession } from './fleet-data'

type Db = Knex | Knex.Transaction
export type SessionRow = ReturnType<typeof toEngineSession>

const COLUMNS = ['s.id', 's.engine_id', 's.event_id', 's.started_at', 's.running_seconds', 's.distance_km', 's.over_revs', 's.band_width_rpm', 's.eq_cache']
const FILL_CHUNK = 500

export interface SessionUsageOptions {
  /** more (exponent, reference rpm) pairs a session of this engine must carry: a limit preview's proposed values */
  extraPairs?: (engineTypeId: number, referenceRpm: number) => { exponent: number; referenceRpm: number }[]
  /** false: fill what is missing in memory only (a preview writes nothing) */
  writeCache?: boolean
  /** leave out the histograms of exact sessions (life reads their cached equivalent hours; charts need them) */
  lifeOnly?: boolean
}

/** Sessions that count (not voided) matching `where` (on alias s), in time order, each exact session with every pair its engine type needs. */
export async function loadSessionUsage(db: Db, where: (qb: Knex.QueryBuilder) => void = () => {}, opts: SessionUsageOptions = {}): Promise<SessionRow[]> {
  const qb = db('sessions as s')
    .join('engines as e', 'e.id', 's.engine_id')
    .join('engine_types as et', 'et.id', 'e.engine_type_id')
    .select(COLUMNS)
    .select(opts.lifeOnly ? db.raw('IF(s.rpm_moments IS NULL, s.histogram, NULL) AS histogram') : 's.histogram')
    .select(db.raw('(s.rpm_moments IS NOT NULL) AS exact'), 'et.reference_rpm', 'e.supplier_id', 'e.engine_type_id')
    // A voided session counts nowhere: life, board, forecasts, part figures and the alerts' check all read here.
    .whereNull('s.voided_at')
    .orderBy(['s.started_at', 's.id'])
  where(qb)
  const rows = await qb
  const exponentsBySupplier = new Map<number, number[]>()
  for (const r of await db('component_types').distinct('supplier_id', 'damage_exponent')) {
    const p = Number(r.damage_exponent)
    if (p === 0) continue
    let list = exponentsBySupplier.get(r.supplier_id)
    if (!list) exponentsBySupplier.set(r.supplier_id, (list = []))
    list.push(p)
  }

  const sessions: SessionRow[] = []
  const missing: Missing[] = []
  const extraByEngineType = new Map<number, { exponent: number; referenceRpm: number }[]>()
  for (const r of rows) {
    const s = toEngineSession(r)
    s.exact = Boolean(Number(r.exact))
    s.eqHoursCache = json<Record<string, number> | null>(r.eq_cache, null)
    sessions.push(s)
    if (!s.exact) continue
    const pairs: Pair[] = (exponentsBySupplier.get(r.supplier_id) ?? []).map((p) => ({ exponent: p, referenceRpm: r.reference_rpm }))
    if (opts.extraPairs) {
      let extra = extraByEngineType.get(r.engine_type_id)
      if (!extra) extraByEngineType.set(r.engine_type_id, (extra = opts.extraPairs(r.engine_type_id, r.reference_rpm).filter((x) => x.exponent !== 0)))
      pairs.push(...extra)
    }
    if (pairs.some((x) => s.eqHoursCache?.[eqCacheKey(x.exponent, x.referenceRpm)] === undefined)) missing.push({ session: s, pairs })
  }
  if (missing.length) await fillCaches(db, missing, opts.writeCache ?? true)
  return sessions
}

type Pair = { exponent: number; referenceRpm: number }
type Missing = { session: SessionRow; pairs: Pair[] }

async function fillCaches(db: Db, missing: Missing[], writeCache: boolean) {
  for (let i = 0; i < missing.length; i += FILL_CHUNK) {
    const chunk = missing.slice(i, i + FILL_CHUNK)
    const blobs = new Map<number, unknown>((await db('sessions').whereIn('id', chunk.map((m) => m.session.sessionId)).select('id', 'rpm_moments')).map((r) => [r.id, r.rpm_moments]))
    const updates: [number, string][] = []
    for (const { session, pairs } of chunk) {
      const moments = momentsOf(blobs.get(session.sessionId))
      if (!moments) continue // re-processed to nothing meanwhile: the next computation reads it afresh
      const cache = { ...session.eqHoursCache }
      for (const [reference, exponents] of groupByReference(pairs)) Object.assign(cache, eqCacheOf(moments, reference, exponents))
      session.eqHoursCache = cache
      updates.push([session.sessionId, JSON.stringify(cache)])
    }
    if (!updates.length || !writeCache) continue
    // One statement per chunk; a cache written twice by two instances holds the same numbers.
    await db.raw(
      `UPDATE sessions SET eq_cache = CASE id ${updates.map(() => 'WHEN ? THEN ?').join(' ')} END WHERE id IN (${updates.map(() => '?').join(',')})`,
      [...updates.flat(), ...updates.map(([id]) => id)],
    )
  }
}

function groupByReference(pairs: Pair[]): Map<number, number[]> {
  const out = new Map<number, number[]>()
  for (const { exponent, referenceRpm } of pairs) {
    const list = out.get(referenceRpm) ?? []
    if (!list.includes(exponent)) list.push(exponent)
    out.set(referenceRpm, list)
  }
  return out
}
