import { beforeAll, describe, expect, it } from 'vitest'
import { momentsRelativeErrorBound } from '../../shared/domain/rpm-moments'
import { BASE, count, db, signIn, storedFiles, USERS, type Client } from './helpers'

// Synthetic traces with known answers (no logger data set is published: cases are built here).
const HEADER = 'time_s,engine_rpm,speed_kmh,oil_press_bar'
const MAPPING = { columns: { time: 'time_s', rpm: 'engine_rpm', speed: 'speed_kmh', oilPressure: 'oil_press_bar' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }

/** 100 Hz: `blocks` of constant rpm, each `seconds` long, at a constant 180 km/h. */
function trace(blocks: { rpm: number; seconds: number }[], extra = '') {
  const lines = [HEADER]
  let i = 0
  for (const b of blocks) {
    for (let k = 0; k < b.seconds * 100; k++, i++) lines.push(`${(i / 100).toFixed(2)},${b.rpm},180,4.5`)
  }
  return `${lines.join('\n')}\n${extra}`
}

let race: Client
let engineId: number
let otherTeamEngine: number

async function upload(client: Client, body: string | Buffer, params: Record<string, string | number | null> = {}) {
  const q = new URLSearchParams({
    engineId: String(engineId),
    kind: 'practice',
    startedAt: new Date(Date.now() - 3600_000).toISOString(),
    fileName: 'fp1.csv',
    mapping: JSON.stringify(MAPPING),
    ...Object.fromEntries(Object.entries(params).map(([k, v]) => [k, v === null ? '' : String(v)])),
  })
  const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie: client.cookie, 'content-type': 'text/csv', origin: BASE }, body: typeof body === 'string' ? body : new Uint8Array(body) })
  return { status: res.status, body: await res.json() }
}

beforeAll(async () => {
  race = await signIn('race@redfern.test')
  engineId = (await db()('engines').where('serial', 'KT4-2102').first()).id
  otherTeamEngine = (await db()('engines').where('serial', 'KV8-1101').first()).id
})

describe('logger import', () => {
  it('turns a known trace into exact running time, histogram and distance, and shows what it cost each part', async () => {
    // 30 s at 6,250 rpm (band 12: 6,000-6,500) then 30 s at 7,250 rpm (band 14); the last sample adds no time.
    const before = (await race.get(`/api/engines/${engineId}`)).body
    const res = await upload(race, trace([{ rpm: 6250, seconds: 30 }, { rpm: 7250, seconds: 30 }]))
    expect(res.status).toBe(201)
    const s = res.body.session
    expect(s.source).toBe('logger')
    expect(s.runningSeconds).toBeCloseTo(59.99, 3)
    expect(s.histogram[12]).toBeCloseTo(30, 3)
    expect(s.histogram[14]).toBeCloseTo(29.99, 3)
    expect(s.histogram.reduce((a: number, b: number) => a + b, 0)).toBeCloseTo(59.99, 3)
    expect(s.distanceKm).toBeCloseTo((180 * 59.99) / 3600, 2) // stored to the metre
    expect(s.maxRpm).toBe(7250)
    expect(s.overRevs).toEqual([])
    expect(res.body.skippedRows).toBe(0)

    const detail = await race.get(`/api/sessions/${s.id}`)
    expect(detail.status).toBe(200)
    const crank = detail.body.cost.find((c: any) => c.typeName === 'Crankshaft')
    expect(crank.hours).toBeCloseTo(59.99 / 3600, 9)
    // Equivalent hours at the 7,000 rpm reference with exponent 13: the trace holds 6,250 and 7,250 rpm steadily,
    // so the definition sum dt (rpm / ref)^p is written out here; the stored moments meet it within their bound.
    const exact = (30 * (6250 / 7000) ** 13 + 29.99 * (7250 / 7000) ** 13) / 3600
    expect(Math.abs(crank.eqHours - exact) / exact).toBeLessThanOrEqual(momentsRelativeErrorBound(13))
    expect(detail.body.session.eqExact).toBe(true)
    const after = (await race.get(`/api/engines/${engineId}`)).body
    expect(after.totalHours - before.totalHours).toBeCloseTo(59.99 / 3600, 9)
    expect(storedFiles()).toBeGreaterThanOrEqual(1)
  })

  it('refuses the same file twice, naming the existing session', async () => {
    const body = trace([{ rpm: 5250, seconds: 5 }])
    const first = await upload(race, body)
    expect(first.status).toBe(201)
    const files = storedFiles()
    const again = await upload(race, body)
    expect(again.status).toBe(409)
    expect(again.body.message).toContain(`session ${first.body.session.id}`)
    expect(storedFiles()).toBe(files)
  })

  it('takes a file another team imported without telling anything of that team, and shows the supplier the link', async () => {
    // one file, held by two teams (a shared test): Redfern first, then Tidewater
    const body = trace([{ rpm: 5500, seconds: 1 }])
    const first = await upload(race, body)
    expect(first.status).toBe(201)
    const redfernSession = first.body.session
    const tidewater = await signIn(USERS.raceB)
    const tidewaterEngine = (await db()('engines').where('serial', 'KV8-1201').first()).id
    const second = await upload(tidewater, body, { engineId: tidewaterEngine })
    const said = JSON.stringify(second.body)
    // nothing of Redfern's session: not its serial, id, or time
    expect(said).not.toContain('KT4-2102')
    expect(said).not.toContain(`session ${redfernSession.id}`)
    expect(said).not.toContain(redfernSession.startedAt.slice(0, 16).replace('T', ' '))
    expect(said).not.toMatch(/already imported/)
    expect(second.status).toBe(201)
    expect(second.body.session.id).not.toBe(redfernSession.id)
    // Tidewater still cannot open Redfern's session
    expect((await tidewater.get(`/api/sessions/${redfernSession.id}`)).status).toBe(404)
    // each team is refused its own copy again, naming its own session only
    const again = await upload(tidewater, body, { engineId: tidewaterEngine })
    expect(again.status).toBe(409)
    expect(again.body.message).toContain(`session ${second.body.session.id}`)
    expect(again.body.message).toContain('KV8-1201')
    expect(JSON.stringify(again.body)).not.toContain('KT4-2102')
    // the supplier sees both teams, so it is shown the link
    const supplier = await signIn(USERS.supplierEngineer)
    const supplierEngine = (await db()('engines').where('serial', 'KT4-2001').first()).id
    const seen = await upload(supplier, body, { engineId: supplierEngine })
    expect(seen.status).toBe(409)
    expect(seen.body.message).toContain(`session ${redfernSession.id}`)
    expect(seen.body.message).toContain('KT4-2102')
    expect(seen.body.data.sessionId).toBe(redfernSession.id)
    expect((await supplier.get(`/api/sessions/${seen.body.data.sessionId}`)).status).toBe(200)
  })

  it('skips a few bad rows with a warning and counts them', async () => {
    const rows = trace([{ rpm: 5750, seconds: 20 }]).split('\n')
    rows[500] = '4.99,5750x,180,4.5'
    const res = await upload(race, rows.join('\n'))
    expect(res.status).toBe(201)
    expect(res.body.skippedRows).toBe(1)
    expect(res.body.warnings[0]).toMatchObject({ row: 501, column: 'engine_rpm' })
  })

  it('re-processes a stored file after the bands change, and audits it', async () => {
    const res = await upload(race, trace([{ rpm: 6250, seconds: 10 }, { rpm: 6750, seconds: 10 }]))
    expect(res.status).toBe(201)
    const type = await db()('engine_types').where('code', 'KT4-20').first()
    const supplier = await signIn(USERS.supplierEngineer)
    expect((await supplier.patch(`/api/engine-types/${type.id}`, { bandWidthRpm: 250 })).status).toBe(200)
    try {
      const re = await race.post(`/api/sessions/${res.body.session.id}/reprocess`)
      expect(re.status).toBe(200)
      expect(re.body.bandWidthRpm).toBe(250)
      expect(re.body.histogram[25]).toBeCloseTo(10, 3) // 6,250 rpm is in 6,250-6,500
      expect(re.body.histogram[27]).toBeCloseTo(9.99, 3)
      const audit = await db()('audit_log').where({ entity: 'session', entity_id: String(res.body.session.id), action: 'reprocess' }).first()
      expect(audit).toBeTruthy()
    } finally {
      await supplier.patch(`/api/engine-types/${type.id}`, { bandWidthRpm: 500 })
    }
  })
})

describe('bad logger files: a clear error and nothing stored', () => {
  const good = () => trace([{ rpm: 6000, seconds: 3 }])
  const cases: [string, () => string | Buffer, number, RegExp, Record<string, string | number>?][] = [
    ['an empty file', () => '', 400, /empty/i],
    ['a header only', () => `${HEADER}\n`, 400, /no data rows|header/i],
    ['a missing mapped column', () => good().replace('engine_rpm', 'rpm_engine'), 400, /engine_rpm/],
    ['many non-numeric cells', () => { let n = 0; return good().replace(/,6000,/g, (m) => (n++ % 3 === 0 ? ',6k,' : m)) }, 400, /too many/i],
    ['time going backwards', () => good().replace('\n1.00,', '\n0.50,'), 400, /[Rr]ow 102.*time_s/],
    ['a duplicate timestamp', () => good().replace('\n1.00,', '\n0.99,'), 400, /[Rr]ow 102/],
    ['binary garbage', () => Buffer.from([0x89, 0x50, 0x4e, 0x47, 0, 0, 0, 13, 0xff, 0xfe, 0, 1, 2, 3]), 400, /not a text|binary|text file/i],
    ['a line longer than the maximum', () => `${HEADER}\n0.00,6000,180,4.5${','.repeat(5000)}\n`, 400, /[Rr]ow 2.*long/],
    ['a file over the size limit', () => trace([{ rpm: 6000, seconds: 2500 }]), 413, /limit|large/i],
    ['an engine of another team', () => good(), 404, /Engine not found/, { engineId: -1 }],
  ]

  it.each(cases)('refuses %s', async (_name, make, status, message, params) => {
    const sessions = await count('sessions')
    const audits = await count('audit_log')
    const files = storedFiles()
    const res = await upload(race, make(), params?.engineId === -1 ? { engineId: otherTeamEngine } : params)
    expect(res.status).toBe(status)
    expect(res.body.message).toMatch(message)
    expect(JSON.stringify(res.body)).not.toMatch(/\.mjs:\d+/)
    expect(await count('sessions')).toBe(sessions)
    expect(await count('audit_log')).toBe(audits)
    expect(storedFiles()).toBe(files)
  })

  it('refuses a mapping that is not JSON, naming the field', async () => {
    const res = await upload(race, trace([{ rpm: 6000, seconds: 1 }]), { mapping: '{oops' })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/mapping/)
  })

  it('saves a logger profile per team and finds it by header', async () => {
    const saved = await race.post('/api/logger-profiles', { name: 'Bench logger v2', header: HEADER.split(','), mapping: MAPPING })
    expect(saved.status).toBe(200)
    const mine = await race.get('/api/logger-profiles')
    expect(mine.body.map((p: any) => p.name)).toContain('Bench logger v2')
    const other = await signIn(USERS.raceA)
    expect((await other.get('/api/logger-profiles')).body.map((p: any) => p.name)).not.toContain('Bench logger v2')
  })
})
