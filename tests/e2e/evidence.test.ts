// Field evidence of a part type through the API, on the demo's valve-spring endurance programme
// (KV8-VSP, run on the supplier's KV8-1001 block before its season build): lives read back from the
// stored sessions, outcomes from the classified findings, and the classification audited.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, db, signIn, USERS } from './helpers'

let engineer: Client
let manager: Client
let vspId: number
let unreadFindingId: number

const evidence = (c: Client, typeId: number, measure = 'hours') => c.get(`/api/component-types/${typeId}/evidence?measure=${measure}`)
const modeOf = (body: any, mode: string) => body.modes.find((m: any) => m.mode === mode)

beforeAll(async () => {
  engineer = await signIn(USERS.supplierEngineer)
  manager = await signIn(USERS.managerA)
  vspId = (await db()('component_types').where('code', 'KV8-VSP').first('id')).id
  const unread = await db()('teardown_findings as f').join('components as c', 'c.id', 'f.component_id').leftJoin('finding_failure_modes as m', 'm.finding_id', 'f.id').where('c.component_type_id', vspId).whereNull('m.finding_id').first('f.id')
  unreadFindingId = unread.id
})

afterAll(async () => {
  // the demo's unread finding stays unread for the other files
  await db()('finding_failure_modes').where('finding_id', unreadFindingId).delete()
})

describe('field evidence of the demo valve springs', () => {
  it('fits the fatigue cracks: seven failures among the programme and the sets running today', async () => {
    const res = await evidence(engineer, vspId)
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(200)
    expect(res.body.componentType.code).toBe('KV8-VSP')
    expect(res.body.limit).toBe(66.5) // the demo's 35 h x 1.9 for the V8
    expect(res.body.unit).toBe('h')
    const crack = modeOf(res.body, 'fatigue crack')
    // the classified findings counted straight from the database
    const cracks = await db()('finding_failure_modes').where('failure_mode', 'fatigue crack').count({ n: '*' }).first()
    expect(crack.failures).toBe(Number(cracks!.n))
    expect(crack.failures).toBe(7)
    expect(crack.fit.fitted).toBe(true)
    const { shape, scale, b10, b1 } = crack.fit.mle
    for (const b of [shape, scale, b10, b1]) expect(b.lower < b.value && b.value < b.upper).toBe(true)
    expect(shape.value).toBeGreaterThan(1) // wear-out: the programme's cracks cluster late
    expect(crack.fit.mle.boundsMethod).toBe('Fisher matrix')
    expect(crack.fit.mrr.method).toBe('median-rank regression')
    // every spring set that ran is a unit; the shelf spare has not run and is left out
    const parts = await db()('components').where('component_type_id', vspId).count({ n: '*' }).first()
    expect(crack.units.length + crack.excluded).toBe(Number(parts!.n))
    expect(crack.units.filter((u: any) => !u.failed).length).toBe(crack.units.length - 7)
  })

  it('reads each life from the sessions run in the part\'s installation window', async () => {
    const res = await evidence(engineer, vspId)
    const crack = modeOf(res.body, 'fatigue crack')
    for (const serial of ['KV8VSP-3101', 'KV8VSP-3102', 'KV8VSP-3105']) {
      const inst = await db()('installations as i').join('components as c', 'c.id', 'i.component_id').where('c.serial', serial).first('i.engine_id', 'i.from_at', 'i.to_at')
      const s = await db()('sessions').where('engine_id', inst.engine_id).where('started_at', '>=', inst.from_at).where('started_at', '<', inst.to_at).sum({ t: 'running_seconds' }).first()
      const unit = crack.units.find((u: any) => u.serial === serial)
      expect(unit.life).toBeCloseTo(Number(s!.t) / 3600, 6)
    }
    // as the demo programme was run: 38 h to a crack, 66.5 h to the limit without one, 71 h to a crack
    expect(crack.units.find((u: any) => u.serial === 'KV8VSP-3101')).toMatchObject({ life: 38, failed: true })
    expect(crack.units.find((u: any) => u.serial === 'KV8VSP-3102')).toMatchObject({ life: 66.5, failed: false })
  })

  it('shows the data without a fit for a mode with too few failures, and for a type with no failure at all', async () => {
    const load = modeOf((await evidence(engineer, vspId)).body, 'loss of load')
    expect(load.failures).toBe(2)
    expect(load.fit).toMatchObject({ fitted: false, reason: 'too-few-failures' })
    expect(load.plotted).toHaveLength(2)
    const tmg = (await db()('component_types').where('code', 'KV8-TMG').first('id')).id
    const res = await evidence(engineer, tmg)
    expect(res.body.modes).toHaveLength(1)
    expect(res.body.modes[0].fit).toMatchObject({ fitted: false, reason: 'no-failures' })
    expect(res.body.modes[0].fit.message).toContain('are suspensions')
  })

  it('equivalent hours are a measure of their own, against the eq. h limit', async () => {
    const res = await evidence(engineer, vspId, 'eqHours')
    expect(res.status).toBe(200)
    expect(res.body.limit).toBe(64.6)
    expect(res.body.unit).toBe('eq. h')
  })

  it('refuses a bad measure (400 naming it), a team (403) and an unknown type (404)', async () => {
    const bad = await evidence(engineer, vspId, 'furlongs')
    expect(bad.status).toBe(400)
    expect(bad.body.message).toContain('measure')
    expect((await evidence(manager, vspId)).status).toBe(403)
    expect((await evidence(engineer, 999_999)).status).toBe(404)
  })
})

describe('classifying a finding as a failure mode', () => {
  const audits = async () => Number((await db()('audit_log').where({ entity: 'teardown_finding', action: 'classify-failure-mode' }).count({ n: '*' }).first())!.n)

  it('moves the fit and is audited with before and after', async () => {
    const before = await evidence(engineer, vspId)
    expect(before.body.unclassified).toBe(1)
    const n = await audits()
    const res = await engineer.put(`/api/findings/${unreadFindingId}/failure-mode`, { failureMode: 'fatigue crack' })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(res.body).toMatchObject({ findingId: unreadFindingId, failureMode: 'fatigue crack', isFailure: true })
    const after = await evidence(engineer, vspId)
    expect(after.body.unclassified).toBe(0)
    expect(modeOf(after.body, 'fatigue crack').failures).toBe(8)
    expect(await audits()).toBe(n + 1)
    const row = await db()('audit_log').where({ entity: 'teardown_finding', entity_id: String(unreadFindingId), action: 'classify-failure-mode' }).orderBy('id', 'desc').first()
    const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)
    expect(parse(row.before_value).failureMode).toBeNull()
    expect(parse(row.after_value).failureMode).toBe('fatigue crack')

    // taken back: unread again, and audited too
    expect((await engineer.put(`/api/findings/${unreadFindingId}/failure-mode`, { failureMode: null })).status).toBe(200)
    expect((await evidence(engineer, vspId)).body.unclassified).toBe(1)
    expect(await audits()).toBe(n + 2)
  })

  it('refuses an unknown mode (400 naming the field), a team (403) and an unknown finding (404), writing nothing', async () => {
    const n = await audits()
    const bad = await engineer.put(`/api/findings/${unreadFindingId}/failure-mode`, { failureMode: 'gremlins' })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toContain('failureMode')
    expect((await manager.put(`/api/findings/${unreadFindingId}/failure-mode`, { failureMode: 'fracture' })).status).toBe(403)
    expect((await engineer.put('/api/findings/999999/failure-mode', { failureMode: 'fracture' })).status).toBe(404)
    expect(await audits()).toBe(n)
    expect(await db()('finding_failure_modes').where('finding_id', unreadFindingId).first()).toBeUndefined()
  })
})
