import { beforeAll, describe, expect, it } from 'vitest'
import { makeEngineType, makeOverRevBands } from '../../db/fixtures'
import { count, db, signIn, USERS, type Client } from './helpers'

// The reciprocating mass of an engine type and the inertia forces the API derives from it.
// A test engine type of its own keeps the demo types untouched for the other files.

let supplier: Client
let managerA: Client
let typeId: number

function expectRel(actual: number, expected: number, rel: number) {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel)
}
const code = `TST-LOADS-${Date.now().toString(36).toUpperCase()}`

beforeAll(async () => {
  supplier = await signIn(USERS.supplierEngineer)
  managerA = await signIn(USERS.managerA)
  const rod = await db()('component_types').where('code', 'KV8-ROD').first('id')
  // The slider-crank worked case: stroke 90 mm, conrod 145 mm, 7,500 rpm, 0.5 kg (invented engine type).
  const res = await supplier.post('/api/engine-types', {
    ...makeEngineType({
      code, name: 'Test loads V6', cylinders: 6, strokeMm: 90, conrodMm: 145, reciprocatingMassKg: 0.5, revLimitRpm: 7500,
      // listed out of threshold order: the sheet sorts them
      overRevBands: makeOverRevBands([['B', 8000, 0.1, 'Inspect valve train'], ['A', 7700, 0.2, 'Logged']]),
    }),
    positions: [1, 2, 3, 4, 5, 6].map((i) => ({ position: `rod-${i}`, label: `Conrod ${i}`, componentTypeId: rod.id })),
  })
  expect(res.status).toBe(201)
  typeId = res.body.id
})

describe('inertia forces on the engine type API (Heywood, Internal Combustion Engine Fundamentals, ch. 2; exact acceleration form)', () => {
  it('lists the force at the rev limit and at each over-rev threshold', async () => {
    const res = await supplier.get('/api/engine-types')
    const t = res.body.find((x: any) => x.id === typeId)
    expect(t.reciprocatingMassKg).toBe(0.5)
    const rows = t.sheet.inertiaForces
    expect(rows.map((r: any) => [r.bandId, r.rpm])).toEqual([[null, 7500], ['A', 7700], ['B', 8000]])
    // Worked case [derived]: 18,186 N at TDC at 7,500 rpm; 0.5 x -19,143.6 = -9,571.8 N at BDC (0.01 %).
    expectRel(rows[0].tdcN, 18186, 1e-4)
    expectRel(rows[0].bdcN, -9571.8, 1e-4)
    // Hand-computed m a w^2 (1 + 1/R) at 7,700 rpm: w = 2 pi 7,700 / 60 = 806.342 rad/s, w^2 = 650,187.6;
    // 0.5 x 0.045 x 650,187.6 x (1 + 45/145) = 19,169.32 N.
    expectRel(rows[1].tdcN, 19169.32, 1e-6)
    // rpm^2 scaling of the worked case: 0.5 kg x 41,384 m/s^2 = 20,692 N at 8,000 rpm (0.01 %).
    expectRel(rows[2].tdcN, 20692, 1e-4)
    expectRel(t.sheet.inertiaForceTdcAtLimit, 18186, 1e-4)
  })

  it('gives a team of the supplier the demo V8\'s forces: 0.52 kg, 81 x 140 mm, 25,202 N at its 9,200 rpm limit', async () => {
    const res = await managerA.get('/api/engine-types')
    expect(res.status).toBe(200)
    const v8 = res.body.find((x: any) => x.code === 'KV8-45')
    // Hand-computed: 0.52 x 0.0405 x (2 pi 9,200 / 60)^2 x (1 + 40.5/140) = 0.52 x 0.0405 x 928,181.46 x 1.289286 = 25,202.31 N
    expectRel(v8.sheet.inertiaForces[0].tdcN, 25202.31, 1e-6)
    expect(v8.sheet.inertiaForces.map((r: any) => r.rpm)).toEqual([9200, 9300, 9500, 9900])
  })
})

describe('PATCH of the reciprocating mass', () => {
  it.each([
    ['a negative mass', -0.5, /^Invalid input: reciprocatingMassKg: must be above zero$/],
    ['zero', 0, /^Invalid input: reciprocatingMassKg: must be above zero$/],
    ['grams typed as kilograms', 520, /reciprocatingMassKg: must be at most 10 kg per cylinder/],
    ['a mass that would round to nothing', 0.00001, /reciprocatingMassKg: must be at least 0\.001 kg/],
    ['text', 'half a kilo', /reciprocatingMassKg: must be a number of kilograms/],
  ])('refuses %s with a 400 naming the field, and writes nothing', async (_name, mass, message) => {
    const audits = await count('audit_log')
    const res = await supplier.patch(`/api/engine-types/${typeId}`, { reciprocatingMassKg: mass })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(message)
    expect(res.body.stack).toBeUndefined()
    expect((await db()('engine_types').where('id', typeId).first()).reciprocating_mass_kg).toBe('0.5000')
    expect(await count('audit_log')).toBe(audits)
  })

  it('saves a new mass, audits it before and after, and the forces follow (F = m a is linear in m)', async () => {
    const res = await supplier.patch(`/api/engine-types/${typeId}`, { reciprocatingMassKg: 0.55 })
    expect(res.status).toBe(200)
    expect(res.body.reciprocatingMassKg).toBe(0.55)
    // 0.55 / 0.5 x 18,186.45 N = 20,005.09 N (hand-computed from the worked case)
    expectRel(res.body.sheet.inertiaForces[0].tdcN, 20005.09, 1e-6)
    const audit = await db()('audit_log').where({ entity: 'engine_type', entity_id: String(typeId), action: 'update' }).orderBy('id', 'desc').first()
    const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)
    expect(parse(audit.before_value).reciprocatingMassKg).toBe(0.5)
    expect(parse(audit.after_value).reciprocatingMassKg).toBe(0.55)
    const user = await db()('users').where('email', USERS.supplierEngineer).first('id')
    expect(audit.user_id).toBe(user.id)
  })

  it('clears the mass with null: the forces leave the sheet', async () => {
    const res = await supplier.patch(`/api/engine-types/${typeId}`, { reciprocatingMassKg: null })
    expect(res.status).toBe(200)
    expect(res.body.reciprocatingMassKg).toBeNull()
    expect(res.body.sheet.inertiaForces).toBeNull()
    expect(res.body.sheet.inertiaForceTdcAtLimit).toBeNull()
    expect((await supplier.patch(`/api/engine-types/${typeId}`, { reciprocatingMassKg: 0.5 })).status).toBe(200)
  })

  it('is the supplier\'s to change: a team manager gets 403 and nothing changes', async () => {
    const res = await managerA.patch(`/api/engine-types/${typeId}`, { reciprocatingMassKg: 0.7 })
    expect(res.status).toBe(403)
    expect((await db()('engine_types').where('id', typeId).first()).reciprocating_mass_kg).toBe('0.5000')
  })

  it('the database itself refuses a mass of zero or below', async () => {
    await expect(db()('engine_types').where('id', typeId).update({ reciprocating_mass_kg: 0 })).rejects.toThrow(/engine_types_reciprocating_mass_positive/)
    await expect(db()('engine_types').where('id', typeId).update({ reciprocating_mass_kg: -1 })).rejects.toThrow(/engine_types_reciprocating_mass_positive/)
    expect((await db()('engine_types').where('id', typeId).first()).reciprocating_mass_kg).toBe('0.5000')
  })
})
