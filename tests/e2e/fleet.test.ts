import { beforeAll, describe, expect, it } from 'vitest'
import { makeEngineType, makeOverRevBands } from '../../db/fixtures'
import { count, db, signIn, USERS, type Client } from './helpers'

let supplier: Client
let managerA: Client
let managerB: Client
let raceA: Client

const engineId = async (serial: string) => (await db()('engines').where({ serial }).first()).id as number
const installationAt = (engine: number, position: string) => db()('installations').where({ engine_id: engine, position }).whereNull('to_at').first()

beforeAll(async () => {
  supplier = await signIn(USERS.supplierEngineer)
  managerA = await signIn(USERS.managerA)
  managerB = await signIn(USERS.managerB)
  raceA = await signIn(USERS.raceA)
})

describe('team scoping', () => {
  it('shows a team only its own engines and the supplier every engine', async () => {
    const a = await managerA.get('/api/board')
    expect(a.status).toBe(200)
    expect(new Set(a.body.engines.map((e: any) => e.teamName))).toEqual(new Set(['Marlowe Vane Racing']))
    const all = await supplier.get('/api/board')
    expect(all.body.engines).toHaveLength(13)
  })

  it('answers 404 for another team\'s engine, sessions, parts and plans', async () => {
    const id = await engineId('KV8-1101') // Marlowe's
    const session = await db()('sessions').where('engine_id', id).first()
    const part = await installationAt(id, 'crank')
    for (const path of [`/api/engines/${id}`, `/api/engines/${id}/sessions`, `/api/engines/${id}/charts`, `/api/sessions/${session.id}`, `/api/parts/${part.component_id}`]) {
      const res = await managerB.get(path)
      expect(res.status, path).toBe(404)
      expect(JSON.stringify(res.body)).not.toContain('KV8-1101')
    }
    const ev = await db()('events').where('series', 'Meridian Endurance GT').where('starts_at', '>', new Date()).orderBy('starts_at').first()
    expect((await managerB.put(`/api/events/${ev.id}/plans/${id}`, { chassis: 'X' })).status).toBe(404)
    const parts = await managerB.get('/api/parts')
    expect(parts.body.some((p: any) => p.engineSerial === 'KV8-1101')).toBe(false)
  })
})

describe('life accounting through the API', () => {
  it('matches the board to the engine page and names the governing limit', async () => {
    const board = await supplier.get('/api/board?q=KV8-1101')
    const row = board.body.engines[0]
    const detail = await supplier.get(`/api/engines/${row.id}`)
    const worst = detail.body.parts.reduce((w: any, p: any) => (p.fraction > w.fraction ? p : w))
    expect(row.worst.fraction).toBeCloseTo(worst.fraction, 12)
    expect(row.worst.governing.label).toBe(worst.governing.label)
    // 7 rounds of endurance running put the bearing shells past 90 % of their 57 h: due (demo scenario).
    expect(row.worst.status).toBe('due')
    expect(worst.typeName).toBe('Bearing shell set')
    expect(worst.governing.kind).toBe('hours')
    expect(worst.governing.limit).toBe(57)
    const sessionSeconds = (await db()('sessions').where('engine_id', row.id).sum({ s: 'running_seconds' }).first())!.s
    expect(worst.hours).toBeCloseTo(Number(sessionSeconds) / 3600, 6)
  })

  it('flags the engine with a teardown-band over-rev for immediate inspection and says it cannot run', async () => {
    const res = await supplier.get('/api/board?q=KV8-1102')
    const e = res.body.engines[0]
    expect(e.overRevFlags.immediateInspection).toBe(true)
    expect(e.nextEvent.ok).toBe(false)
    expect(e.nextEvent.reason).toBe('already-over')
  })

  it('carries a part\'s life with it into another engine', async () => {
    const from = await engineId('KV8-1103')
    const to = await engineId('KV8-1203')
    const moving = await installationAt(from, 'rod-1')
    const before = await supplier.get(`/api/parts/${moving.component_id}`)
    expect(before.body.part.hours).toBeGreaterThan(1)
    const displaced = await installationAt(to, 'rod-1')

    // the removed part's state is never assumed
    const unnamed = await supplier.post(`/api/installations/${moving.id}/remove`, {})
    expect(unnamed.status).toBe(400)
    expect(unnamed.body.message).toMatch(/status/)
    expect((await db()('installations').where('id', moving.id).first()).to_at).toBeNull()
    expect((await supplier.post(`/api/installations/${moving.id}/remove`, { status: 'serviceable' })).status).toBe(200)
    expect((await supplier.post(`/api/installations/${displaced.id}/remove`, { status: 'serviceable' })).status).toBe(200)
    const serial = before.body.part.serial
    const fit = await supplier.post(`/api/engines/${to}/installations`, { position: 'rod-1', serial })
    expect(fit.status).toBe(201)

    const after = await supplier.get(`/api/parts/${moving.component_id}`)
    expect(after.body.part.engineSerial).toBe('KV8-1203')
    expect(after.body.part.hours).toBeCloseTo(before.body.part.hours, 9)
    expect(after.body.part.fraction).toBeCloseTo(before.body.part.fraction, 9)
    expect(after.body.installations.map((i: any) => i.engineSerial)).toEqual(['KV8-1103', 'KV8-1203'])
    const engine = await supplier.get(`/api/engines/${to}`)
    const rod1 = engine.body.parts.find((p: any) => p.position === 'rod-1')
    expect(rod1.serial).toBe(serial)
    expect(rod1.hours).toBeCloseTo(before.body.part.hours, 9)
    // The engine itself has never run: its own hours stay at zero while the part brings its own.
    expect(engine.body.totalHours).toBe(0)
    const audits = await db()('audit_log').where('entity', 'installation').whereIn('action', ['fit', 'remove'])
    expect(audits.length).toBeGreaterThanOrEqual(3)
    // the engine the rod left has an empty position: no event reads as fit to run until it is filled
    const left = (await supplier.get('/api/board?q=KV8-1103')).body.engines[0]
    expect(left.canFinish.length).toBeGreaterThan(0)
    expect(left.canFinish.every((c: any) => !c.ok && c.reason === 'incomplete-build')).toBe(true)
    expect(left.nextEvent).toMatchObject({ ok: false, reason: 'incomplete-build' })
  })

  it('moves every affected fraction at once when a limit changes, and audits it', async () => {
    const ct = await db()('component_types').where('code', 'KV8-BRG').first()
    const id = await engineId('KV8-1201')
    const before = (await supplier.get(`/api/engines/${id}`)).body.parts.find((p: any) => p.position === 'bearings')
    expect(before.governing.limit).toBe(57)
    const patched = await supplier.patch(`/api/component-types/${ct.id}`, { limitHours: 28.5 })
    expect(patched.status).toBe(200)
    const after = (await supplier.get(`/api/engines/${id}`)).body.parts.find((p: any) => p.position === 'bearings')
    expect(after.fraction).toBeCloseTo(before.fraction * 2, 9)
    expect(after.status).toBe('over')
    const audit = await db()('audit_log').where({ entity: 'component_type', entity_id: String(ct.id), action: 'update-limits' }).orderBy('id', 'desc').first()
    const parse = (v: any) => (typeof v === 'string' ? JSON.parse(v) : v)
    expect(parse(audit.before_value).limitHours).toBe(57)
    expect(parse(audit.after_value).limitHours).toBe(28.5)
    expect((await supplier.patch(`/api/component-types/${ct.id}`, { limitHours: 57 })).status).toBe(200)
  })

  it('edits a part type\'s measured characteristics, but keeps those already read at teardowns', async () => {
    // KV8-1202's demo teardowns read the valve springs' free length.
    const ct = await db()('component_types').where('code', 'KV8-VSP').first()
    const original = (typeof ct.characteristics === 'string' ? JSON.parse(ct.characteristics) : ct.characteristics) as any[]
    expect(original.map((c) => c.key)).toEqual(['spring_free_length'])
    const url = `/api/component-types/${ct.id}`
    try {
      const installed = { key: 'installed_load', label: 'Installed load', unit: 'N', nominal: 420, min: 400, max: 440 }
      const widened = await supplier.patch(url, { characteristics: [{ ...original[0], min: 41.5 }, installed] })
      expect(widened.status, JSON.stringify(widened.body)).toBe(200)
      expect(widened.body.characteristics).toEqual([{ ...original[0], min: 41.5 }, installed])
      const dropped = await supplier.patch(url, { characteristics: [installed] })
      expect([dropped.status, dropped.body.message]).toEqual([409, expect.stringMatching(/spring_free_length \(\d+ readings\) already recorded/)])
      const reunited = await supplier.patch(url, { characteristics: [{ ...original[0], unit: 'um' }] })
      expect(reunited.status).toBe(409)
      const twice = await supplier.patch(url, { characteristics: [installed, installed] })
      expect([twice.status, twice.body.message]).toEqual([400, expect.stringContaining('each key only once')])
      const inverted = await supplier.patch(url, { characteristics: [{ ...installed, min: 450 }] })
      expect([inverted.status, inverted.body.message]).toEqual([400, expect.stringContaining('min <= nominal <= max')])
    } finally {
      expect((await supplier.patch(url, { characteristics: original })).status).toBe(200)
    }
  })

  it('feeds a planned running time into "can this engine run the event to the end?"', async () => {
    const id = await engineId('KV8-1202')
    const engine = (await supplier.get(`/api/engines/${id}`)).body
    const next = engine.canFinish[0]
    expect(next.ok).toBe(true)
    // Planning 30 h of running at that event takes the bearing shells (57 h limit, about 38 h used) past the limit.
    const plan = await managerB.put(`/api/events/${next.eventId}/plans/${id}`, { chassis: 'TAM-GT-09', plannedSeconds: 30 * 3600, plannedKm: null })
    expect(plan.status).toBe(200)
    const after = (await supplier.get(`/api/engines/${id}`)).body
    const cell = after.canFinish.find((c: any) => c.eventId === next.eventId)
    expect(cell.ok).toBe(false)
    expect(cell.reason).toBe('projected-over')
    expect(after.limitAt.eventId).toBe(next.eventId)
    await managerB.put(`/api/events/${next.eventId}/plans/${id}`, { chassis: 'TAM-GT-09', plannedSeconds: null, plannedKm: null })
  })
})

describe('bad input changes nothing', () => {
  const validSession = async () => {
    const id = await engineId('KV8-1103')
    const histogram = Array(21).fill(0)
    histogram[16] = 1800
    histogram[17] = 1800
    return { engineId: id, eventId: null, kind: 'test', startedAt: new Date().toISOString(), runningSeconds: 3600, distanceKm: 150, histogram, overRevs: [] }
  }

  it('stores a valid manual session and its life shows at once', async () => {
    const input = await validSession()
    const before = (await raceA.get(`/api/engines/${input.engineId}`)).body.totalHours
    const res = await raceA.post('/api/sessions', input)
    expect(res.status).toBe(201)
    expect(res.body.runningSeconds).toBe(3600)
    const after = (await raceA.get(`/api/engines/${input.engineId}`)).body.totalHours
    expect(after - before).toBeCloseTo(1, 9)
  })

  it.each([
    ['negative running time', (s: any) => ({ ...s, runningSeconds: -5 }), 400, /runningSeconds: must not be negative/],
    ['histogram with the wrong number of bands', (s: any) => ({ ...s, histogram: [3600] }), 400, /histogram: KV8-45 has 21 bands of 500 rpm/],
    ['histogram that does not add up to the running time', (s: any) => ({ ...s, runningSeconds: 7200 }), 400, /histogram: the bands add up to 60\.0 min but the running time is 120\.0 min/],
    ['an over-rev in a band the engine type does not have', (s: any) => ({ ...s, overRevs: [{ bandId: 'Z', peakRpm: 9999, durationS: 1, startS: 0 }] }), 400, /overRevs\.0\.bandId/],
    ['an unknown engine', (s: any) => ({ ...s, engineId: 999999 }), 404, /Engine not found/],
    ['a bad date', (s: any) => ({ ...s, startedAt: 'yesterday' }), 400, /startedAt/],
  ])('refuses %s', async (_name, mutate, status, message) => {
    const before = await count('sessions')
    const audits = await count('audit_log')
    const res = await raceA.post('/api/sessions', mutate(await validSession()))
    expect(res.status).toBe(status)
    expect(res.body.message).toMatch(message)
    expect(await count('sessions')).toBe(before)
    expect(await count('audit_log')).toBe(audits)
  })

  it('refuses a part already installed elsewhere, a filled position, a wrong type and an unknown serial', async () => {
    const target = await engineId('KV8-1203')
    const elsewhere = await db()('components as c').join('installations as i', 'i.component_id', 'c.id').where('i.engine_id', await engineId('KV8-1101')).where('i.position', 'rod-2').whereNull('i.to_at').first('c.serial')
    const spareRod = await db()('components as c').join('component_types as t', 't.id', 'c.component_type_id').where({ 't.code': 'KV8-ROD', 'c.status': 'serviceable' }).first('c.serial')
    const spareCrank = await db()('components as c').join('component_types as t', 't.id', 'c.component_type_id').where({ 't.code': 'KV8-CRK', 'c.status': 'serviceable' }).first('c.serial')
    const installs = await count('installations')

    const twice = await supplier.post(`/api/engines/${target}/installations`, { position: 'rod-2', serial: elsewhere.serial })
    expect(twice.status).toBe(409)
    expect(twice.body.message).toMatch(/already installed in KV8-1101 at rod-2/)
    const filled = await supplier.post(`/api/engines/${target}/installations`, { position: 'rod-3', serial: spareRod.serial })
    expect(filled.status).toBe(409)
    expect(filled.body.message).toMatch(/Conrod 3 of KV8-1203 already holds/)
    const wrongType = await supplier.post(`/api/engines/${target}/installations`, { position: 'rod-3', serial: spareCrank.serial })
    expect(wrongType.status).toBe(400)
    expect(wrongType.body.message).toMatch(/is a Crankshaft \(KV8-CRK\); Conrod 3 takes a Connecting rod/)
    const unknown = await supplier.post(`/api/engines/${target}/installations`, { position: 'rod-3', serial: 'NO-SUCH-PART' })
    expect(unknown.status).toBe(404)
    expect(await count('installations')).toBe(installs)
  })

  it('refuses limits that make no sense, naming the field', async () => {
    const ct = await db()('component_types').where('code', 'KV8-ROD').first()
    const res = await supplier.patch(`/api/component-types/${ct.id}`, { limitHours: -3 })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/limitHours/)
    const levels = await supplier.patch(`/api/component-types/${ct.id}`, { warningLevel: 0.95 })
    expect(levels.status).toBe(400)
    expect(levels.body.message).toMatch(/dueLevel: must be above the warning level/)
  })
})

describe('roles', () => {
  it.each([
    [USERS.raceA, 'PATCH', '/api/component-types/1', { limitHours: 10 }, 403],
    [USERS.managerA, 'PATCH', '/api/engine-types/1', { idleRpm: 1400 }, 403],
    [USERS.mechanicA, 'POST', '/api/sessions', {}, 403],
    [USERS.raceA, 'GET', '/api/users', undefined, 403],
    [USERS.raceA, 'PUT', '/api/events/9/plans/1', { chassis: null }, 403],
    [USERS.mechanicA, 'GET', '/api/board', undefined, 200],
    [USERS.supplierMechanic, 'GET', '/api/engines', undefined, 200],
    [USERS.managerA, 'GET', '/api/users', undefined, 200],
    [USERS.supplierEngineer, 'PATCH', '/api/engine-types/1', { idleRpm: 1500 }, 200],
  ])('%s %s %s answers %i', async (email, method, path, body, status) => {
    const client = await signIn(email)
    const res = await client.request(method, path, body)
    expect(res.status).toBe(status)
  })
})

describe('engine and component types', () => {
  const componentType = (code: string) => ({ code, name: 'Test conrod', category: 'Crank drive', limitHours: 50, damageExponent: 13, limitOverRev: { C: 1 }, immediateInspectionBand: 'C', characteristics: [{ key: 'big_end_ovality', label: 'Big-end bore ovality', unit: 'mm', nominal: 0, min: 0, max: 0.008 }] })

  it('lets the supplier engineer create a component type and an engine type that uses it, with its sheet', async () => {
    const ct = await supplier.post('/api/component-types', componentType('TST-ROD'))
    expect(ct.status).toBe(201)
    expect(ct.body).toMatchObject({ code: 'TST-ROD', limitHours: 50, warningLevel: 0.8, dueLevel: 0.9 })
    const et = await supplier.post('/api/engine-types', {
      ...makeEngineType({ code: 'TST-V6', cylinders: 6, strokeMm: 90, conrodMm: 145, revLimitRpm: 7500, overRevBands: makeOverRevBands([['A', 7600, 0.2, 'Logged']]) }),
      positions: [1, 2, 3, 4, 5, 6].map((i) => ({ position: `rod-${i}`, label: `Conrod ${i}`, componentTypeId: ct.body.id })),
    })
    expect(et.status).toBe(201)
    // Heywood, Internal Combustion Engine Fundamentals, ch. 2 slider-crank formulas; worked case stroke 90 mm, rod 145 mm, 7,500 rpm: 22.5 m/s, 36,372.9 m/s^2 at TDC (derived).
    expect(et.body.sheet.meanPistonSpeedAtLimit).toBeCloseTo(22.5, 9)
    expect(et.body.sheet.pistonAccelTdcAtLimit / 36372.9).toBeCloseTo(1, 3)
    expect(et.body.sheet.firingIntervalDeg).toBe(120)
    expect(et.body.positions).toHaveLength(6)
  })

  it('refuses a bad engine type naming the field, a duplicate code, and a team role', async () => {
    const bad = await supplier.post('/api/engine-types', {
      ...makeEngineType({ code: 'TST-BAD', strokeMm: 86, conrodMm: 40 }),
      positions: [{ position: 'crank', label: 'Crank', componentTypeId: 1 }],
    })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/conrodMm: must be longer than the crank radius/)
    expect((await supplier.post('/api/component-types', componentType('TST-ROD'))).status).toBe(409)
    expect((await managerA.post('/api/component-types', componentType('TST-ROD2'))).status).toBe(403)
    const noLimit = await supplier.post('/api/component-types', { ...componentType('TST-NOLIM'), limitHours: null, limitOverRev: {} })
    expect(noLimit.status).toBe(400)
    expect(noLimit.body.message).toMatch(/limitHours: a life-limited part needs at least one limit/)
  })
})

describe('board filters through the API', () => {
  it('filters by team, engine type, status and location, and sorts by what is due first', async () => {
    const all = (await supplier.get('/api/board')).body
    const marlowe = all.teams.find((t: any) => t.name === 'Marlowe Vane Racing')
    const byTeam = (await supplier.get(`/api/board?team=${marlowe.id}`)).body.engines
    expect(byTeam.length).toBeGreaterThan(0)
    expect(byTeam.every((e: any) => e.teamName === 'Marlowe Vane Racing')).toBe(true)
    const kt4 = all.engineTypes.find((t: any) => t.code === 'KT4-20')
    expect((await supplier.get(`/api/board?type=${kt4.id}`)).body.engines.every((e: any) => e.engineTypeCode === 'KT4-20')).toBe(true)
    const shelf = (await supplier.get('/api/board?location=shelf')).body.engines
    expect(shelf.length).toBeGreaterThan(0)
    expect(shelf.every((e: any) => e.location === 'shelf')).toBe(true)
    for (const status of ['ok', 'warning', 'due', 'over']) {
      const rows = (await supplier.get(`/api/board?status=${status}`)).body.engines
      expect(rows.every((e: any) => e.worst.status === status), status).toBe(true)
    }
    const consumed = (await supplier.get('/api/board?sort=consumed')).body.engines.map((e: any) => e.worst.fraction)
    expect(consumed).toEqual([...consumed].sort((a: number, b: number) => b - a))
    const due = (await supplier.get('/api/board?sort=due')).body.engines
    expect(due[0].worst.status).toBe('over')
    // A team filter for another team's id shows nothing to a team member, never that team's engines.
    const tidewater = all.teams.find((t: any) => t.name === 'Tidewater Apex Motorsport')
    expect((await managerA.get(`/api/board?team=${tidewater.id}`)).body.engines).toEqual([])
    const bad = await supplier.get('/api/board?status=broken')
    expect(bad.status).toBe(400)
    expect(bad.body.message).toMatch(/status/)
  })
})
