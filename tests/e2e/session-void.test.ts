// Voiding a session filed in error and restoring it, on an engine of this file's own: every figure
// that counts sessions (board, part life, over-rev counts, forecast) moves back and forward, both
// changes are audited, and only the team's race engineer or the supplier may do it.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { BASE, db, signIn, USERS, type Client } from './helpers'
import { freshEngine, removeFreshEngines, type FreshEngine } from './fresh-engine'
import { ledgerSessions } from '../../db/billing-ledger'

// KV8-45 (demo): rev limit 9,200 rpm in 500 rpm bands: (9,200 + 1,000) / 500 rounded up = 21 bands.
const BANDS = 21
function histogram(seconds: number, band: number) {
  const h = Array<number>(BANDS).fill(0)
  h[band] = seconds
  return h
}
const HOUR = 3_600_000

let race: Client
let supplier: Client
let otherRace: Client
let mechanic: Client
let manager: Client
let engine: FreshEngine
let rodId: number
let first: number
let wrong: number

async function figures() {
  const board = await race.get(`/api/board?q=${engine.serial}`)
  const row = board.body.engines.find((e: any) => e.id === engine.id)
  const rod = (await race.get(`/api/parts/${rodId}`)).body
  return {
    totalHours: row.totalHours as number,
    sessions: row.sessions as number,
    overRevEvents: row.overRevFlags.events as number,
    lastSession: row.lastSession?.id as number | undefined,
    forecast: row.canFinish.map((c: any) => c.worstFraction) as number[],
    rodHours: rod.part.hours as number,
    rodKm: rod.part.km as number,
    rodOverRevB: (rod.part.overRevCounts.B ?? 0) as number,
    rodSessions: rod.sessions.map((s: any) => s.id) as number[],
    billed: (await ledgerSessions(db(), engine.teamId, new Date(Date.now() - 24 * HOUR).toISOString(), new Date().toISOString())).filter((s) => s.engineId === engine.id).map((s) => s.id),
  }
}

beforeAll(async () => {
  ;[race, supplier, otherRace, mechanic, manager] = await Promise.all([signIn(USERS.raceA), signIn(USERS.supplierEngineer), signIn(USERS.raceB), signIn(USERS.mechanicA), signIn(USERS.managerA)])
  engine = await freshEngine('KV8-VD')
  rodId = (await db()('installations').where({ engine_id: engine.id, position: 'rod-1' }).first()).component_id
  // One hour at 8,000-8,499 rpm over 150 km counts throughout; the second session is the wrong one.
  const a = await race.post('/api/sessions', { engineId: engine.id, eventId: null, kind: 'test', startedAt: new Date(Date.now() - 5 * HOUR).toISOString(), runningSeconds: 3600, distanceKm: 150, histogram: histogram(3600, 16) })
  expect(a.status, JSON.stringify(a.body)).toBe(201)
  first = a.body.id
})

afterAll(async () => {
  await removeFreshEngines([engine])
})

describe('voiding a session', () => {
  it('moves every figure back, and restoring moves them forward again', async () => {
    const before = await figures()
    expect(before.totalHours).toBeCloseTo(1, 9)
    expect(before.sessions).toBe(1)
    expect(before.overRevEvents).toBe(0)
    expect(before.lastSession).toBe(first)
    expect(before.rodHours).toBeCloseTo(1, 9)
    expect(before.rodKm).toBeCloseTo(150, 9)
    expect(before.rodOverRevB).toBe(0)

    // Half an hour at 9,000-9,499 rpm, 80 km, one over-rev in band B (inspect valve train).
    const b = await race.post('/api/sessions', {
      engineId: engine.id, eventId: null, kind: 'test', startedAt: new Date(Date.now() - 2 * HOUR).toISOString(),
      runningSeconds: 1800, distanceKm: 80, histogram: histogram(1800, 18), overRevs: [{ bandId: 'B', peakRpm: 9560, durationS: 0.3 }],
    })
    expect(b.status, JSON.stringify(b.body)).toBe(201)
    wrong = b.body.id
    const counted = await figures()
    expect(counted.totalHours).toBeCloseTo(1.5, 9)
    expect(counted.sessions).toBe(2)
    expect(counted.overRevEvents).toBe(1)
    expect(counted.lastSession).toBe(wrong)
    expect(counted.rodHours).toBeCloseTo(1.5, 9)
    expect(counted.rodKm).toBeCloseTo(230, 9)
    expect(counted.rodOverRevB).toBe(1)
    expect(counted.rodSessions).toContain(wrong)
    // Billing reads the same sessions: a voided one bills nothing (one issued already turns into a credit line).
    expect(counted.billed).toEqual([first, wrong])
    // The forecast reads the recent duty: a harder half hour changes what the coming events would use.
    expect(counted.forecast.length).toBeGreaterThan(0)
    expect(counted.forecast).not.toEqual(before.forecast)

    const voided = await race.post(`/api/sessions/${wrong}/void`, { reason: 'Imported against the wrong engine' })
    expect(voided.status, JSON.stringify(voided.body)).toBe(200)
    expect(voided.body.voided).toMatchObject({ reason: 'Imported against the wrong engine', byName: expect.any(String) })
    expect(await figures()).toEqual(before)

    const page = await race.get(`/api/sessions/${wrong}`)
    expect(page.status).toBe(200)
    expect(page.body.session.voided.reason).toBe('Imported against the wrong engine')

    const restored = await supplier.post(`/api/sessions/${wrong}/restore`, { reason: 'It was the right engine after all' })
    expect(restored.status, JSON.stringify(restored.body)).toBe(200)
    expect(restored.body.voided).toBeNull()
    expect(await figures()).toEqual(counted)
  })

  it('audits the void and the restore, with who, why and what was voided', async () => {
    const trail = await supplier.get('/api/audit?entity=session&pageSize=200')
    expect(trail.status).toBe(200)
    const mine = trail.body.items.filter((a: any) => a.entityId === String(wrong))
    const voidRow = mine.find((a: any) => a.action === 'void')
    const restoreRow = mine.find((a: any) => a.action === 'restore')
    expect(voidRow.after).toEqual({ voided: true, reason: 'Imported against the wrong engine' })
    expect(voidRow.before).toMatchObject({ engineSerial: engine.serial, kind: 'test', runningSeconds: 1800, voided: false })
    expect(voidRow.userName).toBeTruthy()
    expect(restoreRow.before).toMatchObject({ voided: true, reason: 'Imported against the wrong engine' })
    expect(restoreRow.after).toMatchObject({ voided: false, reason: 'It was the right engine after all' })
    expect(restoreRow.id).toBeGreaterThan(voidRow.id)
  })

  it('is refused to another team (404), to roles that may not (403), without a reason (400), and twice (409)', async () => {
    const audits = async () => Number((await db()('audit_log').where({ entity: 'session', entity_id: String(first) }).count({ n: '*' }).first())!.n)
    const n = await audits()
    const other = await otherRace.post(`/api/sessions/${first}/void`, { reason: 'not ours to void' })
    expect(other.status).toBe(404)
    expect(other.body.message).toBe('Session not found')
    expect((await otherRace.post(`/api/sessions/${first}/restore`, {})).status).toBe(404)
    expect((await mechanic.post(`/api/sessions/${first}/void`, { reason: 'a mechanic may not' })).status).toBe(403)
    expect((await manager.post(`/api/sessions/${first}/void`, { reason: 'a manager may not' })).status).toBe(403)

    const none = await race.post(`/api/sessions/${first}/void`, {})
    expect(none.status).toBe(400)
    expect(none.body.message).toMatch(/reason/)
    const blank = await race.post(`/api/sessions/${first}/void`, { reason: '  ' })
    expect(blank.status).toBe(400)
    expect(blank.body.message).toMatch(/reason: a reason is needed/)
    expect(await audits()).toBe(n)
    expect((await db()('sessions').where('id', first).first()).voided_at).toBeNull()

    expect((await race.post(`/api/sessions/${first}/restore`, {})).status).toBe(409)
    expect((await race.post(`/api/sessions/${first}/void`, { reason: 'probe' })).status).toBe(200)
    const again = await race.post(`/api/sessions/${first}/void`, { reason: 'probe again' })
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/already voided/)
    expect((await race.post(`/api/sessions/${first}/restore`, {})).status).toBe(200)
  })
})

describe('the sessions list', () => {
  it('hides voided sessions unless asked, and filters by engine, kind, source and dates', async () => {
    expect((await race.post(`/api/sessions/${wrong}/void`, { reason: 'Logged twice' })).status).toBe(200)
    const hidden = await race.get(`/api/sessions?engineId=${engine.id}`)
    expect(hidden.status).toBe(200)
    expect(hidden.body.items.map((s: any) => s.id)).toEqual([first])
    expect(hidden.body.total).toBe(1)
    const shown = await race.get(`/api/sessions?engineId=${engine.id}&voided=show`)
    expect(shown.body.items.map((s: any) => s.id)).toEqual([wrong, first])
    expect(shown.body.items[0]).toMatchObject({ engineSerial: engine.serial, engineTypeCode: 'KV8-45', teamName: 'Marlowe Vane Racing', kind: 'test', source: 'manual', overRevCount: 1, runningSeconds: 1800, distanceKm: 80 })
    expect(shown.body.items[0].voided.reason).toBe('Logged twice')
    const only = await race.get(`/api/sessions?engineId=${engine.id}&voided=only`)
    expect(only.body.items.map((s: any) => s.id)).toEqual([wrong])

    expect((await race.get(`/api/sessions?engineId=${engine.id}&kind=race`)).body.total).toBe(0)
    expect((await race.get(`/api/sessions?engineId=${engine.id}&source=logger`)).body.total).toBe(0)
    expect((await race.get(`/api/sessions?engineId=${engine.id}&source=manual&kind=test`)).body.total).toBe(1)
    const today = new Date(Date.now() - 5 * HOUR).toISOString().slice(0, 10)
    expect((await race.get(`/api/sessions?engineId=${engine.id}&from=${today}&to=${today}`)).body.total).toBe(1)
    expect((await race.get(`/api/sessions?engineId=${engine.id}&to=2020-01-01`)).body.total).toBe(0)
    const asc = await race.get(`/api/sessions?engineId=${engine.id}&voided=show&dir=asc&pageSize=1&page=2`)
    expect(asc.body).toMatchObject({ total: 2, page: 2, pageSize: 1 })
    expect(asc.body.items.map((s: any) => s.id)).toEqual([wrong])
  })

  it('shows another team none of these sessions, and names a bad filter', async () => {
    const other = await otherRace.get(`/api/sessions?engineId=${engine.id}&voided=show`)
    expect(other.status).toBe(200)
    expect(other.body.total).toBe(0)
    const all = await otherRace.get('/api/sessions?voided=show&pageSize=100')
    expect(JSON.stringify(all.body)).not.toContain(engine.serial)
    expect((await supplier.get(`/api/sessions?engineId=${engine.id}&voided=show`)).body.total).toBe(2)

    const bad = await race.get('/api/sessions?from=2026-12-05&to=2026-12-01')
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/to: must be on or after from/)
    expect((await race.get('/api/sessions?kind=warmup')).status).toBe(400)
    expect((await race.get('/api/sessions?pageSize=1000')).body.message).toMatch(/pageSize/)
  })
})

describe('a voided logger import', () => {
  const CSV = ['time_s,engine_rpm', ...Array.from({ length: 600 }, (_, i) => `${(i / 10).toFixed(1)},${i < 10 ? 900 : 7000}`)].join('\n') + '\n'
  const upload = async (params: Record<string, string> = {}) => {
    const q = new URLSearchParams({ engineId: String(engine.id), kind: 'test', startedAt: new Date(Date.now() - HOUR).toISOString(), fileName: 'void-probe.csv', mapping: JSON.stringify({ columns: { time: 'time_s', rpm: 'engine_rpm' }, units: {}, decimal: '.' }), ...params })
    const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: race.cookie, 'content-type': 'text/csv', origin: BASE }, body: CSV })
    return { status: res.status, body: await res.json() }
  }

  it('lets the same file be imported again, and refuses to restore the first while the second counts', async () => {
    const a = await upload()
    expect(a.status, JSON.stringify(a.body)).toBe(201)
    const firstImport = a.body.session.id
    expect((await upload()).status).toBe(409) // the same file while it counts
    expect((await race.post(`/api/sessions/${firstImport}/void`, { reason: 'Filed as a test, was a shakedown' })).status).toBe(200)
    const b = await upload({ kind: 'practice' })
    expect(b.status, JSON.stringify(b.body)).toBe(201)
    const restore = await race.post(`/api/sessions/${firstImport}/restore`, {})
    expect(restore.status).toBe(409)
    expect(restore.body.message).toBe(`Session ${firstImport} cannot be restored: the same logger file counts as session ${b.body.session.id}; void that one first`)
  })
})
