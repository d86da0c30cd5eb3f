// Exact equivalent hours and one over-rev verdict, end to end: a logger file with known per-sample
// answers is imported, then the damage exponent and the reference rpm change, then the bands. The
// expected equivalent hours are the per-sample integral sum dt (rpm / ref)^p / 3600 written out in this
// file (Palmgren-Miner with Basquin's S-N line, Shigley's fatigue chapter), never the product's function.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { computeFleetLife } from '../../server/services/life'
import { runLifeCheck } from '../../tasks/life-check'
import { mariadbLock } from '../../tasks/lock'
import { BASE, db, signIn, type Client } from './helpers'

const ENGINE = 'KT4-2001' // the supplier's own test engine: no other test runs it or swaps its parts
const HZ = 20
const HEADER = 'time_s,engine_rpm'
const MAPPING = { columns: { time: 'time_s', rpm: 'engine_rpm' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }

/** Steady steps, a ramp and one over-rev excursion: 0.6 s at 7,750 rpm with one 0.05 s sample at 8,300 in it. */
function samples(): { t: number; rpm: number }[] {
  const out: { t: number; rpm: number }[] = []
  let t = 0
  const add = (rpm: number, seconds: number) => {
    for (let k = 0; k < Math.round(seconds * HZ); k++, t += 1 / HZ) out.push({ t: Math.round(t * 1000) / 1000, rpm })
  }
  add(7000, 300) // on a band edge, at the reference rpm
  add(6999, 300) // just below it
  add(7001, 300) // just above it
  for (let k = 0; k < 600 * HZ; k++, t += 1 / HZ) out.push({ t: Math.round(t * 1000) / 1000, rpm: Math.round(4000 + (3600 * k) / (600 * HZ)) })
  add(7550, 5)
  add(7750, 0.3)
  add(8300, 0.05)
  add(7750, 0.25)
  add(7000, 60)
  add(1000, 1)
  return out
}
const TRACE = samples()
const CSV = `${HEADER}\n${TRACE.map((s) => `${s.t.toFixed(3)},${s.rpm}`).join('\n')}\n`

/** The definition: each step at the rpm of the sample that starts it, while running (above idle 1,200 rpm). */
function perSampleEqHours(ref: number, p: number): number {
  let total = 0
  for (let k = 1; k < TRACE.length; k++) {
    const dt = TRACE[k]!.t - TRACE[k - 1]!.t
    const rpm = TRACE[k - 1]!.rpm
    if (rpm > 1200) total += dt * Math.pow(rpm / ref, p)
  }
  return total / 3600
}

let engineer: Client
let engineId: number
let sessionId: number
let crankTypeId: number
let engineTypeId: number
let originalBands: any[]
let originalExponent: number
let originalReference: number
const startedAt = new Date(Date.now() - 2 * 3600_000).toISOString()
/** each rod's over-rev counts before the file: the demo may have logged events on this engine already */
const countsBefore = new Map<number, Record<string, number>>()
const plus = (counts: Record<string, number> | undefined, band: string) => ({ ...counts, [band]: (counts?.[band] ?? 0) + 1 })

async function rodsOfEngine() {
  return db()('installations as i').join('components as c', 'c.id', 'i.component_id').where('i.engine_id', engineId).whereNull('i.to_at').where('i.position', 'like', 'rod-%').select('c.id')
}

async function overRevAlertsOfEngine(): Promise<number> {
  return Number((await db()('alerts').where({ engine_id: engineId, kind: 'over-rev' }).count({ n: '*' }).first())!.n)
}

async function lifeCheck() {
  await runLifeCheck({ db: db(), fleetLife: (now) => computeFleetLife(db(), now), now: () => new Date(), lock: mariadbLock(db()), instance: 'exact-life-test', publicUrl: BASE })
}

beforeAll(async () => {
  engineer = await signIn('engineer@keelbrook.test')
  const engine = await db()('engines').where('serial', ENGINE).first()
  engineId = engine.id
  engineTypeId = engine.engine_type_id
  const et = await db()('engine_types').where('id', engineTypeId).first()
  originalBands = typeof et.over_rev_bands === 'string' ? JSON.parse(et.over_rev_bands) : et.over_rev_bands
  originalReference = et.reference_rpm
  const crank = await db()('component_types').where('code', 'KT4-CRK').first()
  crankTypeId = crank.id
  originalExponent = Number(crank.damage_exponent)
  // A teardown band that needs 0.1 s: the 0.05 s flick to 8,300 rpm must not count there.
  const bands = originalBands.map((b: any) => (b.id === 'C' ? { ...b, minDurationS: 0.1 } : b))
  expect((await engineer.patch(`/api/engine-types/${engineTypeId}`, { overRevBands: bands })).status).toBe(200)

  for (const rod of await rodsOfEngine()) countsBefore.set(rod.id, (await engineer.get(`/api/parts/${rod.id}`)).body.part.overRevCounts)
  const q = new URLSearchParams({ engineId: String(engineId), kind: 'test', startedAt, fileName: 'exact-life.csv', mapping: JSON.stringify(MAPPING) })
  const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: engineer.cookie, 'content-type': 'text/csv', origin: BASE }, body: CSV })
  const body = await res.json()
  expect(res.status, JSON.stringify(body)).toBe(201)
  sessionId = body.session.id
})

afterAll(async () => {
  await engineer.patch(`/api/component-types/${crankTypeId}`, { damageExponent: originalExponent })
  await engineer.patch(`/api/engine-types/${engineTypeId}`, { referenceRpm: originalReference, overRevBands: originalBands })
  // The engine goes back to the shelf as the demo had it: no session, no alert from this file.
  const alertIds = await db()('alerts').where('engine_id', engineId).pluck('id')
  if (alertIds.length) {
    await db()('alert_acks').whereIn('alert_id', alertIds).delete()
    await db()('alert_recipients').whereIn('alert_id', alertIds).delete()
    await db()('mail_outbox').whereIn('alert_id', alertIds).delete()
    await db()('alerts').whereIn('id', alertIds).delete()
  }
  if (sessionId) await db()('sessions').where('id', sessionId).delete()
  await db()('life_revision').where('id', 1).increment('revision', 1)
})

describe('equivalent hours of a stored session', () => {
  it('equal the per-sample integral within 0.1 % at the engine type\'s reference rpm and the crank\'s exponent', async () => {
    const view = (await engineer.get(`/api/sessions/${sessionId}`)).body
    expect(view.session.eqExact).toBe(true)
    const crank = view.cost.find((c: any) => c.typeName === 'Crankshaft')
    const exact = perSampleEqHours(originalReference, originalExponent)
    expect(Math.abs(crank.eqHours - exact) / exact).toBeLessThan(1e-3)
    expect(view.eqErrorBound).toBeLessThan(1e-3)
  })

  it('after a change of exponent and of reference rpm: the new definition, without the raw file, and the same as a fresh import of it', async () => {
    expect((await engineer.patch(`/api/component-types/${crankTypeId}`, { damageExponent: 17 })).status).toBe(200)
    expect((await engineer.patch(`/api/engine-types/${engineTypeId}`, { referenceRpm: 7150 })).status).toBe(200)
    const view = (await engineer.get(`/api/sessions/${sessionId}`)).body
    const crank = view.cost.find((c: any) => c.typeName === 'Crankshaft')
    const exact = perSampleEqHours(7150, 17)
    expect(Math.abs(crank.eqHours - exact) / exact).toBeLessThan(1e-3)

    // The whole fleet's figures, then every stored file read again (as a fresh import would), then again.
    const fleetEq = async () => new Map([...(await computeFleetLife(db(), new Date())).parts].map(([id, p]) => [id, p.eqHours]))
    const before = await fleetEq()
    const withFiles: number[] = await db()('sessions').whereNotNull('file_key').pluck('id')
    for (const id of withFiles) expect((await engineer.post(`/api/sessions/${id}/reprocess`, {})).status).toBe(200)
    const after = await fleetEq()
    expect(after.size).toBe(before.size)
    for (const [id, eq] of before) expect(after.get(id)).toBeCloseTo(eq, 9)
  })
})

describe('one verdict per over-rev event', () => {
  it('a 0.05 s flick above the inspection and teardown thresholds inside a 0.6 s logged excursion counts once, as logged, everywhere', async () => {
    const view = (await engineer.get(`/api/sessions/${sessionId}`)).body
    expect(view.session.overRevs).toHaveLength(1)
    const ev = view.session.overRevs[0]
    expect(ev.bandId).toBe('A')
    expect(ev.peakRpm).toBe(8300)
    // time at or above each threshold, by hand: 0.6 s above 7,700; the one 8,300 sample (0.05 s) above 7,900 and 8,200
    expect(ev.secondsAbove.A).toBeCloseTo(0.6, 6)
    expect(ev.secondsAbove.B).toBeCloseTo(0.05, 6)
    expect(ev.secondsAbove.C).toBeCloseTo(0.05, 6)

    for (const rod of await rodsOfEngine()) {
      const part = (await engineer.get(`/api/parts/${rod.id}`)).body.part
      expect(part.overRevCounts).toEqual(plus(countsBefore.get(rod.id), 'A'))
      expect(part.immediateInspection).toBe(false)
    }
    const board = (await engineer.get('/api/board')).body
    const row = board.engines.find((e: any) => e.serial === ENGINE)
    expect(row.overRevFlags.immediateInspection).toBe(false)
    await lifeCheck()
    expect(await overRevAlertsOfEngine()).toBe(0)
  })

  it('bands edited back (teardown from any duration): the stored event is decided again, audited, and every view follows', async () => {
    expect((await engineer.patch(`/api/engine-types/${engineTypeId}`, { overRevBands: originalBands })).status).toBe(200)
    const audit = await db()('audit_log').where({ entity: 'session', entity_id: String(sessionId), action: 'reclassify-over-revs' }).orderBy('id', 'desc').first()
    const parsed = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)
    expect(parsed(audit.before_value)[0].bandId).toBe('A')
    expect(parsed(audit.after_value)[0].bandId).toBe('C')

    const view = (await engineer.get(`/api/sessions/${sessionId}`)).body
    expect(view.session.overRevs.map((e: any) => e.bandId)).toEqual(['C'])
    const rods = await rodsOfEngine()
    for (const rod of rods) {
      const part = (await engineer.get(`/api/parts/${rod.id}`)).body.part
      expect(part.overRevCounts).toEqual(plus(countsBefore.get(rod.id), 'C'))
      expect(part.immediateInspection).toBe(true)
    }
    const row = (await engineer.get('/api/board')).body.engines.find((e: any) => e.serial === ENGINE)
    expect(row.overRevFlags.immediateInspection).toBe(true)
    await lifeCheck()
    // one immediate-inspection alert per part whose type demands it for this band (the four rods and the valve springs)
    const flagged = (await db()('alerts as a').join('alert_parts as p', 'p.alert_id', 'a.id').where({ 'a.engine_id': engineId, 'a.kind': 'over-rev' }).pluck('p.component_id')).sort()
    expect(flagged).toEqual(expect.arrayContaining(rods.map((r: any) => r.id)))
  })
})
