// The session charts through the API: a logger file with every channel, an over-rev and a dip in
// oil pressure; the chart the session view answers; and a session stored before channels were kept,
// which charts rpm alone until a starting instance reads its kept file again.
// KV8-1203 is Tidewater's spare; the session made here is removed afterwards.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { BASE, db, signIn, type Client } from './helpers'
import { startServer, type ExtraServer } from './servers'

const MAPPING = {
  columns: { time: 'time_s', rpm: 'engine_rpm', oilTemp: 'oil_t', oilPressure: 'oil_p', waterTemp: 'water_t', speed: 'speed' },
  units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
  decimal: '.',
}
let sessionId: number
let race: Client
let extra: ExtraServer | undefined

/**
 * 120 s at 10 Hz. rpm 7000, except 9400 from 30.0 to 30.9 s (KV8-45: band A from 9300 rpm for 0.2 s).
 * Oil pressure 4.5 bar, except 1.6 bar from 60.0 to 61.0 s with 1.4 bar at 60.5 s (KV8-45: below
 * 2.0 bar above 4000 rpm for 0.5 s is low). Oil temperature 100 + t/10 °C, water 88 °C, speed 180 km/h.
 */
function loggerFile(): string {
  const rows = ['time_s,engine_rpm,oil_t,oil_p,water_t,speed']
  for (let k = 0; k <= 1200; k++) {
    const rpm = k >= 300 && k <= 309 ? 9400 : 7000
    const oilP = k === 605 ? 1.4 : k >= 600 && k <= 610 ? 1.6 : 4.5
    rows.push(`${(k / 10).toFixed(1)},${rpm},${(100 + k / 100).toFixed(2)},${oilP},88,180`)
  }
  return `${rows.join('\n')}\n`
}

beforeAll(async () => {
  race = await signIn('race@tidewater.test')
  const engine = await db()('engines').where('serial', 'KV8-1203').first()
  const q = new URLSearchParams({ engineId: String(engine.id), kind: 'test', startedAt: new Date(Date.now() - 3 * 3600_000).toISOString(), fileName: 'all-channels.csv', mapping: JSON.stringify(MAPPING) })
  const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: race.cookie, 'content-type': 'text/csv', origin: BASE }, body: loggerFile() })
  expect(res.status).toBe(201)
  sessionId = (await res.json()).session.id
})

afterAll(async () => {
  await extra?.stop()
  if (sessionId) await db()('sessions').where('id', sessionId).delete()
  await db()('life_revision').where('id', 1).increment('revision', 1)
})

const finite = (xs: (number | null)[]) => xs.filter((x): x is number => x !== null)

describe('session charts', () => {
  it('charts every channel with its extremes and marks the over-rev and the low oil pressure', async () => {
    const { status, body } = await race.get(`/api/sessions/${sessionId}`)
    expect(status).toBe(200)
    const { overview, markers } = body.chart
    expect(overview.t0[0]).toBe(0)
    expect(overview.t1[overview.t1.length - 1]).toBe(120)
    expect(overview.t0.length).toBeLessThanOrEqual(300)
    const ch = overview.channels
    expect(Math.max(...finite(ch.rpm.max))).toBe(9400)
    expect(Math.min(...finite(ch.rpm.min))).toBe(7000)
    expect(Math.min(...finite(ch.oilPressureBar.min))).toBe(1.4)
    expect(Math.max(...finite(ch.oilPressureBar.max))).toBe(4.5)
    expect(Math.min(...finite(ch.oilTempC.min))).toBe(100)
    expect(Math.max(...finite(ch.oilTempC.max))).toBe(112)
    expect(new Set([...finite(ch.waterTempC.min), ...finite(ch.waterTempC.max)])).toEqual(new Set([88]))
    expect(new Set([...finite(ch.speedKmh.min), ...finite(ch.speedKmh.max)])).toEqual(new Set([180]))
    // the dip sits in the bucket that spans 60.5 s
    const dip = ch.oilPressureBar.min.indexOf(1.4)
    expect(overview.t0[dip]).toBeLessThanOrEqual(60.5)
    expect(overview.t1[dip]).toBeGreaterThanOrEqual(60.5)
    expect(markers.map((m: any) => [m.kind, m.channel, m.startS, m.value])).toEqual([
      ['over-rev', 'rpm', 30, 9400],
      ['low-oil-pressure', 'oilPressureBar', 60, 1.4],
    ])
    expect(markers[0].bandId).toBe('A')
  })

  it('a session stored before channels were kept charts rpm alone, until a starting instance reads its kept file again', async () => {
    const before = await db()('sessions').where('id', sessionId).first('trace_overview')
    expect(before.trace_overview).not.toBeNull()
    await db()('sessions').where('id', sessionId).update({ trace_overview: null })

    const old = (await race.get(`/api/sessions/${sessionId}`)).body.chart
    expect(old.overview.channels.oilTempC).toBeNull()
    expect(old.overview.channels.oilPressureBar).toBeNull()
    expect(Math.max(...finite(old.overview.channels.rpm.max))).toBe(9400)
    // the markers stay, the low oil pressure one with no pressure chart to sit on
    expect(old.markers.map((m: any) => m.kind)).toEqual(['over-rev', 'low-oil-pressure'])

    extra = await startServer()
    await expect.poll(async () => (await db()('sessions').where('id', sessionId).first('trace_overview')).trace_overview, { timeout: 30_000, interval: 250 }).not.toBeNull()
    const after = await db()('sessions').where('id', sessionId).first('trace_overview')
    expect(JSON.parse(after.trace_overview)).toEqual(JSON.parse(before.trace_overview))
    // only the overview was written: nothing audited as a re-process
    expect(await db()('audit_log').where({ entity: 'session', entity_id: String(sessionId), action: 'reprocess' }).first()).toBeUndefined()
  })
})
