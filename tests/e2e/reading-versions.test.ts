// A reading names the version it was typed against: a reading changed meanwhile by someone else is
// refused with 409 and the current value, never overwritten; the same value sent twice (a retry after a
// lost answer) is no conflict. On an engine of its own (teardown readings) and its own oil samples.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { type Client, USERS, db, signIn } from './helpers'
import { freshEngine, removeFreshEngines, type FreshEngine } from './fresh-engine'

let engine: FreshEngine
let workshop: Client
let engineer: Client
let race: Client
let td = 0
let rodId = 0

beforeAll(async () => {
  engine = await freshEngine('RV', { typeCode: 'KT4-20' })
  ;[workshop, engineer, race] = await Promise.all([signIn(USERS.supplierMechanic), signIn(USERS.supplierEngineer), signIn(USERS.raceA)])
  const start = await workshop.post('/api/teardowns', { engineId: engine.id, reason: 'scheduled' })
  expect(start.status, JSON.stringify(start.body)).toBe(201)
  td = start.body.id
  const sheet = await workshop.get(`/api/teardowns/${td}`)
  rodId = sheet.body.parts.find((p: any) => p.position === 'rod-1').componentId
})

afterAll(async () => {
  await db()('oil_samples').where('engine_id', engine.id).delete()
  await db()('teardowns').where('engine_id', engine.id).delete()
  await removeFreshEngines([engine])
})

const put = (c: Client, body: Record<string, unknown>) => c.put(`/api/teardowns/${td}/measurements`, { componentId: rodId, key: 'bolt_stretch', ...body })

describe('teardown readings with the version the client saw', () => {
  it('stores a first reading at version 1 and the next one at version 2', async () => {
    const first = await put(workshop, { value: 0.15, baseVersion: 0 })
    expect(first.status, JSON.stringify(first.body)).toBe(200)
    expect(first.body).toMatchObject({ value: 0.15, version: 1, verdict: 'in' })
    const second = await put(workshop, { value: 0.151, baseVersion: 1 })
    expect(second.body).toMatchObject({ value: 0.151, version: 2 })
    const sheet = await workshop.get(`/api/teardowns/${td}`)
    const row = sheet.body.parts.find((p: any) => p.componentId === rodId).rows.find((r: any) => r.key === 'bolt_stretch')
    expect(row.measurement).toMatchObject({ value: 0.151, version: 2 })
  })

  it('refuses a reading typed against an older version with 409 and the current reading, leaving it stored', async () => {
    // The engineer corrects the reading the mechanic saw at version 2.
    expect((await put(engineer, { value: 0.155, baseVersion: 2 })).body.version).toBe(3)
    const stale = await put(workshop, { value: 0.17, baseVersion: 2 })
    expect(stale.status).toBe(409)
    expect(stale.body.message).toMatch(/^value: Rod bolt stretch .* was changed by someone else/)
    expect(stale.body.data.current).toMatchObject({ value: 0.155, version: 3, verdict: 'in', measuredByName: expect.any(String) })
    const row = await db()('teardown_measurements').where({ teardown_id: td, component_id: rodId, characteristic_key: 'bolt_stretch' }).first()
    expect(Number(row.value)).toBe(0.155)
    expect(row.version).toBe(3)
  })

  it('takes the same value sent again against the older version as already stored (no new version)', async () => {
    const again = await put(engineer, { value: 0.155, baseVersion: 2 })
    expect(again.status).toBe(200)
    expect(again.body).toMatchObject({ value: 0.155, version: 3 })
  })

  it('refuses a first reading when someone else stored one meanwhile (base 0)', async () => {
    expect((await put(engineer, { key: 'small_end_bore', value: 22.004, baseVersion: 0 })).status).toBe(200)
    const late = await put(workshop, { key: 'small_end_bore', value: 22.006, baseVersion: 0 })
    expect(late.status).toBe(409)
    expect(late.body.data.current).toMatchObject({ value: 22.004, version: 1 })
  })

  it('names baseVersion when it is not a whole number of 0 or more', async () => {
    for (const baseVersion of [-1, 1.5, 'two']) {
      const bad = await put(workshop, { value: 0.15, baseVersion })
      expect(bad.status).toBe(400)
      expect(bad.body.message).toContain('baseVersion')
    }
  })
})

describe('oil sample corrections with the version the client saw', () => {
  it('refuses a correction of a sample changed meanwhile with 409 and the current sample', async () => {
    const sampleId = `RV-${Date.now().toString(36)}`
    const sampledAt = new Date(Date.now() - 86_400_000).toISOString()
    const created = await race.post('/api/oil/samples', { engineId: engine.id, lab: 'Bench lab', sampleId, sampledAt, kv100: 11.0, elements: { Fe: 8 } })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    expect(created.body.version).toBe(1)
    const id = created.body.id
    const corrected = await race.put(`/api/oil/samples/${id}`, { lab: 'Bench lab', sampleId, sampledAt, kv100: 11.2, elements: { Fe: 8 }, baseVersion: 1 })
    expect(corrected.status, JSON.stringify(corrected.body)).toBe(200)
    expect(corrected.body).toMatchObject({ kv100: 11.2, version: 2 })
    const stale = await engineer.put(`/api/oil/samples/${id}`, { lab: 'Bench lab', sampleId, sampledAt, kv100: 10.1, elements: { Fe: 8 }, baseVersion: 1 })
    expect(stale.status).toBe(409)
    expect(stale.body.message).toMatch(/^baseVersion: sample RV-.* was changed by someone else/)
    expect(stale.body.data.current).toMatchObject({ id, kv100: 11.2, version: 2 })
    expect(Number((await db()('oil_samples').where('id', id).first()).kv100)).toBe(11.2)
    expect((await engineer.put(`/api/oil/samples/${id}`, { sampleId, sampledAt, kv100: 11.2, baseVersion: 0 })).status).toBe(400)
  })
})
