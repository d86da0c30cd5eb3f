// The benchmark fleet shared by the benches: 500 engines of a 40-position type, 200 sessions each
// (BENCH_ENGINES / BENCH_SESSIONS to scale), added to the demo in the test database.
import knexFactory from 'knex'
import { knexConfig } from '../db/knexfile'
import { rng, tracedSessionRow } from '../db/fixtures'
import { ENGINE_TYPES } from '../db/seeds/fleet'
import { syntheticTrace } from '../db/seeds/traces'
import { sh } from './server'

export const ENGINES = Number(process.env.BENCH_ENGINES ?? 500)
export const PARTS = 40
export const SESSIONS = Number(process.env.BENCH_SESSIONS ?? 200)

/** Seeds the fleet, or keeps the one a previous bench left in the test database (BENCH_KEEP_FLEET=1). */
export async function prepareFleet(url: string) {
  if (process.env.BENCH_KEEP_FLEET === '1') return console.log('using the fleet already in the test database (BENCH_KEEP_FLEET=1)')
  console.log(`seeding ${ENGINES} engines x ${PARTS} parts x ${SESSIONS} sessions into the test database`)
  const t0 = Date.now()
  await seedLargeFleet(url)
  console.log(`  seeded in ${((Date.now() - t0) / 1000).toFixed(1)} s`)
}

export async function seedLargeFleet(url: string) {
  sh('npx', ['tsx', 'db/cli.ts', 'reset'], { NUXT_DATABASE_URL: url })
  const knex = knexFactory(knexConfig(url))

  const rand = rng(7)
  const supplier = await knex('organisations').where('kind', 'supplier').first()
  const teams = await knex('organisations').where('kind', 'team')
  const v8 = await knex('engine_types').where('code', 'KV8-45').first()
  const cts = await knex('component_types').where('code', 'like', 'KV8-%')
  // A bench engine type with 40 positions drawn from the V8's component types.
  const { id: _id, created_at: _c, updated_at: _u, ...v8Row } = v8
  const asJson = (v: unknown) => (typeof v === 'string' ? v : JSON.stringify(v))
  const [typeId] = await knex('engine_types').insert({ ...v8Row, code: 'BENCH-40', name: 'Bench type with 40 parts', over_rev_bands: asJson(v8.over_rev_bands), low_oil_pressure: asJson(v8.low_oil_pressure) })
  const positions = Array.from({ length: PARTS }, (_, i) => ({ engine_type_id: typeId, position: `p-${i + 1}`, label: `Position ${i + 1}`, component_type_id: cts[i % cts.length].id, sort: i }))
  await knex('engine_type_positions').insert(positions)

  const t = ENGINE_TYPES[0]!
  // as the fleet computation asks for them: every damage exponent of the supplier's part types
  const exponents = (await knex('component_types').where('supplier_id', supplier.id).distinct('damage_exponent').pluck('damage_exponent')).map(Number).filter((p: number) => p !== 0)
  const start = Date.now() - 400 * 86_400_000
  const batch = <T>(list: T[], n: number) => Array.from({ length: Math.ceil(list.length / n) }, (_, i) => list.slice(i * n, (i + 1) * n))
  for (let e = 0; e < ENGINES; e++) {
    const team = teams[e % teams.length]
    const [engineId] = await knex('engines').insert({ serial: `BX-${String(e + 1).padStart(4, '0')}`, engine_type_id: typeId, supplier_id: supplier.id, team_id: team.id, status: 'active', location: 'car', chassis: `BX-C${e}`, built_at: new Date(start) })
    const comps = positions.map((p, i) => ({ supplier_id: supplier.id, component_type_id: p.component_type_id, serial: `BX${e + 1}-${i + 1}`, status: 'installed', born_at: new Date(start) }))
    const [firstComp] = await knex('components').insert(comps)
    await knex('installations').insert(positions.map((p, i) => ({ component_id: firstComp! + i, engine_id: engineId, position: p.position, from_at: new Date(start) })))
    const sessions = Array.from({ length: SESSIONS }, (_, k) => {
      const seconds = 600 + Math.round(rand() * 1800)
      // a few hundred steady steps: as many rpm moments as a real session keeps, far fewer samples
      const trace = syntheticTrace(t, seconds, rand, { stepS: [4, 6] })
      return tracedSessionRow(trace, t, exponents, {
        engine_id: engineId,
        team_id: team.id,
        kind: 'practice',
        started_at: new Date(start + (k + 1) * 3600_000 * 12),
        distance_km: Math.round(seconds * 0.04 * 10) / 10,
        over_revs: JSON.stringify(rand() < 0.05 ? [{ bandId: 'A', peakRpm: 9350, durationS: 0.3, startS: 10 }] : []),
      })
    })
    for (const b of batch(sessions, 500)) await knex('sessions').insert(b)
    if ((e + 1) % 100 === 0) console.log(`  seeded ${e + 1} engines`)
  }
  await knex.destroy()
}
