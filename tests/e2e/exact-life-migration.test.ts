// Sessions stored before rpm moments were kept: an instance reads their kept raw files again once
// after it starts, so their equivalent hours become exact. Simulated by clearing one session's
// moments and starting a further instance on the same database and file store.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { BASE, db, signIn } from './helpers'
import { startServer, type ExtraServer } from './servers'

const MAPPING = { columns: { time: 'time_s', rpm: 'engine_rpm' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
let sessionId: number
let extra: ExtraServer | undefined

beforeAll(async () => {
  const race = await signIn('race@tidewater.test')
  const engine = await db()('engines').where('serial', 'KV8-1203').first()
  const rows = ['time_s,engine_rpm']
  for (let k = 0; k <= 1200; k++) rows.push(`${(k / 10).toFixed(1)},${k < 600 ? 7400 : 8600}`)
  const q = new URLSearchParams({ engineId: String(engine.id), kind: 'test', startedAt: new Date(Date.now() - 5 * 3600_000).toISOString(), fileName: 'before-moments.csv', mapping: JSON.stringify(MAPPING) })
  const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: race.cookie, 'content-type': 'text/csv', origin: BASE }, body: `${rows.join('\n')}\n` })
  expect(res.status).toBe(201)
  sessionId = (await res.json()).session.id
})

afterAll(async () => {
  await extra?.stop()
  if (sessionId) await db()('sessions').where('id', sessionId).delete()
  await db()('life_revision').where('id', 1).increment('revision', 1)
})

describe('exact equivalent hours for sessions stored before', () => {
  it('a starting instance reads the kept file again and the session is exact once more, with the same moments', async () => {
    const before = await db()('sessions').where('id', sessionId).first('rpm_moments')
    expect(before.rpm_moments).not.toBeNull()
    await db()('sessions').where('id', sessionId).update({ rpm_moments: null })
    extra = await startServer()
    await expect.poll(async () => (await db()('sessions').where('id', sessionId).first('rpm_moments')).rpm_moments, { timeout: 30_000, interval: 250 }).not.toBeNull()
    const after = await db()('sessions').where('id', sessionId).first('rpm_moments')
    expect(Buffer.compare(after.rpm_moments, before.rpm_moments)).toBe(0)
    const audit = await db()('audit_log').where({ entity: 'session', entity_id: String(sessionId), action: 'reprocess' }).first()
    expect(audit).toBeTruthy()
    expect(audit.user_id).toBeNull()
  })
})
