// A session's start is checked against its event's dates and its engine type's series: a few days
// outside the event needs an explicit confirmation (409 until confirmDate is sent), weeks away or
// in the future is refused (400 naming startedAt), an event of another series is refused (400
// naming eventId). The day boundaries are common practice (shared/domain/session-date.ts).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { BASE, db, signIn, USERS, type Client } from './helpers'
import { freshEngine, removeFreshEngines, type FreshEngine } from './fresh-engine'

const DAY = 86_400_000
const BANDS = 21 // KV8-45: (9,200 + 1,000) rpm in 500 rpm bands, rounded up
const histogram = Array.from({ length: BANDS }, (_, i) => (i === 15 ? 1200 : 0))

let race: Client
let supplier: Client
let engine: FreshEngine
let gtEvent: { id: number; startsAt: string; endsAt: string }
let touringEventId: number

const sessionCount = async () => Number((await db()('sessions').where('engine_id', engine.id).count({ n: '*' }).first())!.n)
const post = (startedAt: number, extra: Record<string, unknown> = {}) =>
  race.post('/api/sessions', { engineId: engine.id, eventId: gtEvent.id, kind: 'practice', startedAt: new Date(startedAt).toISOString(), runningSeconds: 1200, distanceKm: 60, histogram, ...extra })

beforeAll(async () => {
  ;[race, supplier] = await Promise.all([signIn(USERS.raceA), signIn(USERS.supplierEngineer)])
  engine = await freshEngine('KV8-DT')
  // An invented event of the engine's series, ended 30 days ago.
  const ends = Date.now() - 30 * DAY
  const created = await supplier.post('/api/events', {
    name: `Date probe ${engine.serial}`, series: 'Meridian Endurance GT', track: 'Probe circuit', trackLengthKm: 4.2,
    startsAt: new Date(ends - 2 * DAY).toISOString(), endsAt: new Date(ends).toISOString(),
  })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  gtEvent = created.body
  touringEventId = (await db()('events').where('series', 'Coastline Touring Cup').orderBy('starts_at').first()).id
})

afterAll(async () => {
  await removeFreshEngines([engine], [gtEvent?.id].filter(Boolean) as number[])
})

describe('the session date against its event', () => {
  it('stores a session inside the event, or within a day of it, without asking', async () => {
    expect((await post(Date.parse(gtEvent.startsAt) + 3 * 3_600_000)).status).toBe(201)
    expect((await post(Date.parse(gtEvent.endsAt) + 20 * 3_600_000)).status).toBe(201)
  })

  it('asks for confirmation three days after the event, stores nothing until confirmed, and audits the confirmation', async () => {
    const n = await sessionCount()
    const at = Date.parse(gtEvent.endsAt) + 3 * DAY
    const asked = await post(at)
    expect(asked.status).toBe(409)
    expect(asked.body.message).toMatch(new RegExp(`^startedAt: \\d{4}-\\d{2}-\\d{2} is 3 days after Date probe ${engine.serial} \\(.* to .*\\); check the date and the event, and confirm \\(confirmDate\\)`))
    expect(asked.body.data).toEqual({ field: 'startedAt', confirmField: 'confirmDate', daysOutside: 3 })
    expect(await sessionCount()).toBe(n)

    const confirmed = await post(at, { confirmDate: true })
    expect(confirmed.status, JSON.stringify(confirmed.body)).toBe(201)
    const row = await db()('audit_log').where({ entity: 'session', entity_id: String(confirmed.body.id), action: 'create' }).first()
    const after = typeof row.after_value === 'string' ? JSON.parse(row.after_value) : row.after_value
    expect(after.dateConfirmed).toBe(true)
  })

  it('refuses a session ten days after the event, even when confirmed, naming startedAt', async () => {
    const n = await sessionCount()
    for (const confirmDate of [false, true]) {
      const res = await post(Date.parse(gtEvent.endsAt) + 10 * DAY, { confirmDate })
      expect(res.status).toBe(400)
      expect(res.body.message).toMatch(/^Invalid input: startedAt: .* is 10 days after Date probe .*cannot belong to it/)
    }
    expect(await sessionCount()).toBe(n)
  })

  it('refuses an event of the other series (400 naming eventId) and a start in the future (400 naming startedAt)', async () => {
    const n = await sessionCount()
    const series = await post(Date.now() - DAY, { eventId: touringEventId })
    expect(series.status).toBe(400)
    expect(series.body.message).toMatch(/^Invalid input: eventId: .* belongs to the Coastline Touring Cup, not to KV8-45 engines/)
    const future = await post(Date.now() + 2 * DAY, { eventId: null })
    expect(future.status).toBe(400)
    expect(future.body.message).toMatch(/^Invalid input: startedAt: .* is in the future/)
    expect(await sessionCount()).toBe(n)
  })

  it('applies the same check to a logger import, confirmed through its query', async () => {
    const csv = ['time_s,engine_rpm', ...Array.from({ length: 300 }, (_, i) => `${(i / 10).toFixed(1)},${6000 + (i % 7) * 10}`)].join('\n') + '\n'
    const upload = (startedAt: number, params: Record<string, string> = {}) => {
      const q = new URLSearchParams({ engineId: String(engine.id), eventId: String(gtEvent.id), kind: 'practice', startedAt: new Date(startedAt).toISOString(), fileName: 'date-probe.csv', mapping: JSON.stringify({ columns: { time: 'time_s', rpm: 'engine_rpm' }, units: {}, decimal: '.' }), ...params })
      return fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: race.cookie, 'content-type': 'text/csv', origin: BASE }, body: csv }).then(async (r) => ({ status: r.status, body: await r.json() }))
    }
    const n = await sessionCount()
    expect((await upload(Date.parse(gtEvent.endsAt) + 10 * DAY)).status).toBe(400)
    const asked = await upload(Date.parse(gtEvent.endsAt) + 4 * DAY)
    expect(asked.status).toBe(409)
    expect(asked.body.data.confirmField).toBe('confirmDate')
    expect(await sessionCount()).toBe(n)
    const confirmed = await upload(Date.parse(gtEvent.endsAt) + 4 * DAY, { confirmDate: 'true' })
    expect(confirmed.status, JSON.stringify(confirmed.body)).toBe(201)
    expect(await sessionCount()).toBe(n + 1)
  })
})
