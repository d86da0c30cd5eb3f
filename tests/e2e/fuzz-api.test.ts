// Random bad bodies against the write routes, as a signed-in supplier engineer (and, for the
// user route, which a supplier engineer may not use at all, also as an admin so the body
// validation itself is reached). 150 requests in all. Every answer must be a 4xx with a JSON
// message, never a 5xx or a stack trace, and nothing may be written: no session, no user,
// no audit row.
//
// Bodies are drawn from mutations of a valid body (a field dropped, replaced by an arbitrary
// value or an extra key added) and from arbitrary JSON and raw text; a drawn body that the
// route's own schema would accept is discarded, so each request is one the server must refuse.
import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { ManualSessionSchema, ComponentTypeUpdateSchema } from '../../shared/schemas/fleet'
import { ImportQuerySchema } from '../../shared/schemas/import'
import { TeardownStartSchema } from '../../shared/schemas/teardown'
import { UserCreateSchema } from '../../shared/schemas/user'
import type { z } from 'zod'
import { BASE, db, signIn, USERS, type Client } from './helpers'

const PER_ROUTE = 25 // 6 route/actor pairs: 150 requests

let engineer: Client
let admin: Client
let engineId: number
let componentTypeId: number
const before: Record<string, { n: number; max: number }> = {}
const TABLES = ['sessions', 'users', 'audit_log'] as const
const seen: { status: number; route: string }[] = []

async function tableState(table: string) {
  const row = await db()(table).count({ n: '*' }).max({ max: 'id' }).first()
  return { n: Number(row!.n), max: Number(row!.max ?? 0) }
}

beforeAll(async () => {
  engineer = await signIn(USERS.supplierEngineer)
  admin = await signIn(USERS.admin)
  engineId = (await db()('engines').where('status', 'active').orderBy('id').first()).id
  componentTypeId = (await db()('component_types').orderBy('id').first()).id
  for (const t of TABLES) before[t] = await tableState(t)
})

afterAll(async () => {
  // what the routes answered, for the record of the run
  const byStatus = seen.reduce<Record<string, number>>((m, s) => ((m[`${s.route} ${s.status}`] = (m[`${s.route} ${s.status}`] ?? 0) + 1), m), {})
  console.log('fuzz-api answers:', byStatus)
})

function expectRefusal(route: string, res: { status: number; text: string; type: string | null }, sent: unknown) {
  seen.push({ status: res.status, route })
  const context = `${route} answered ${res.status} to ${JSON.stringify(sent)?.slice(0, 300)}: ${res.text.slice(0, 300)}`
  expect(res.status, context).toBeGreaterThanOrEqual(400)
  expect(res.status, context).toBeLessThan(500)
  expect(res.type, context).toMatch(/application\/json/)
  const body = JSON.parse(res.text)
  expect(typeof body.message, context).toBe('string')
  expect(body.message.length, context).toBeGreaterThan(3)
  expect(res.text, context).not.toMatch(/\bat [^\s]+ \(|\.(mjs|ts|js):\d+:\d+|"stack"/)
}

async function send(client: Client, method: string, path: string, body: string, contentType = 'application/json') {
  const res = await fetch(`${BASE}${path}`, { method, headers: { cookie: client.cookie, 'content-type': contentType, origin: BASE }, body })
  return { status: res.status, text: await res.text(), type: res.headers.get('content-type') }
}

const anyValue = fc.oneof(
  fc.jsonValue({ maxDepth: 3 }),
  fc.constantFrom('', ' ', 'null', -1, 0, -0, 1e308, 2 ** 53 + 1, '1e309', 'x'.repeat(5000), '\u0000', '\ud83d\udca5', '2026-13-45T99:99:99Z', [], {}, true),
  fc.string({ unit: 'binary', maxLength: 40 }),
)

/** A JSON text: a mutated valid body, arbitrary JSON, or not JSON at all. */
function bodies(valid: Record<string, unknown>, schema: z.ZodType): fc.Arbitrary<string> {
  const keys = Object.keys(valid)
  const mutated = fc
    .record({
      drop: fc.subarray(keys),
      replace: fc.dictionary(fc.constantFrom(...keys), anyValue, { maxKeys: 3 }),
      extra: fc.dictionary(fc.string({ maxLength: 12 }), anyValue, { maxKeys: 2 }),
    })
    .map(({ drop, replace, extra }) => {
      const b: Record<string, unknown> = { ...valid, ...replace, ...extra }
      for (const k of drop) delete b[k]
      return JSON.stringify(b)
    })
  const raw = fc.oneof(
    fc.string({ unit: 'binary', maxLength: 200 }),
    fc.constantFrom('{', '{"a":', '[1,2', 'null', '"just a string"', '{"__proto__":{"admin":true}}', `${'['.repeat(3000)}${']'.repeat(3000)}`, '\u0000\u0001'),
  )
  return fc
    .oneof({ weight: 5, arbitrary: mutated }, { weight: 2, arbitrary: fc.jsonValue().map((v) => JSON.stringify(v)) }, { weight: 2, arbitrary: raw })
    .filter((text) => {
      // keep only bodies the route must refuse
      let parsed: unknown
      try {
        parsed = JSON.parse(text)
      } catch {
        return true
      }
      return !schema.safeParse(parsed ?? {}).success
    })
}

async function fuzz(route: string, client: () => Client, method: string, path: () => string, valid: () => Record<string, unknown>, schema: z.ZodType) {
  await fc.assert(
    fc.asyncProperty(bodies(valid(), schema), async (text) => {
      expectRefusal(route, await send(client(), method, path(), text), text)
    }),
    { numRuns: PER_ROUTE, endOnFailure: true },
  )
}

describe('write routes refuse random bad bodies with a 4xx and a message', () => {
  it('POST /api/sessions', async () => {
    await fuzz('sessions', () => engineer, 'POST', () => '/api/sessions', () => ({ engineId, kind: 'practice', startedAt: '2026-03-01T10:00:00Z', runningSeconds: 1200, distanceKm: 50, histogram: [600, 600], overRevs: [] }), ManualSessionSchema)
  })

  it('PATCH /api/component-types/:id', async () => {
    await fuzz('component-types', () => engineer, 'PATCH', () => `/api/component-types/${componentTypeId}`, () => ({ name: 'Crankshaft', limitHours: 30, warningLevel: 0.8, dueLevel: 0.95 }), ComponentTypeUpdateSchema)
  })

  it('POST /api/users (supplier engineer: not allowed; admin: the body is checked)', async () => {
    const valid = () => ({ email: 'fuzz-probe@example.test', name: 'Fuzz Probe', role: 'mechanic', organisationId: 2, password: 'fuzz-probe-pass-2026' })
    await fuzz('users(engineer)', () => engineer, 'POST', () => '/api/users', valid, UserCreateSchema)
    await fuzz('users(admin)', () => admin, 'POST', () => '/api/users', valid, UserCreateSchema)
  })

  it('POST /api/teardowns', async () => {
    await fuzz('teardowns', () => engineer, 'POST', () => '/api/teardowns', () => ({ engineId, reason: 'scheduled', note: 'fuzz' }), TeardownStartSchema)
  })

  it('POST /api/imports: random query strings and random file bytes', async () => {
    const mapping = JSON.stringify({ columns: { time: 'time_s', rpm: 'engine_rpm' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' })
    const validQuery = { engineId: String(engineId), kind: 'practice', startedAt: '2026-03-01T10:00:00Z', fileName: 'fuzz.csv', mapping }
    const query = fc
      .record({ drop: fc.subarray(Object.keys(validQuery)), replace: fc.dictionary(fc.constantFrom(...Object.keys(validQuery), 'laps', 'eventId'), fc.oneof(fc.string({ unit: 'binary', maxLength: 60 }), fc.jsonValue().map((v) => JSON.stringify(v))), { maxKeys: 3 }) })
      .map(({ drop, replace }) => {
        const q: Record<string, string> = { ...validQuery, ...replace }
        for (const k of drop) delete q[k]
        return q
      })
    // a file the valid query would accept needs the mapped header, which these bytes never hold
    const file = fc.oneof(fc.uint8Array({ maxLength: 4000 }), fc.string({ unit: 'binary', maxLength: 2000 }).map((s) => new TextEncoder().encode(s)), fc.constant(new Uint8Array()))
    const validFile = new TextEncoder().encode('time_s,engine_rpm\n0,3000\n0.1,3000\n0.2,3000\n')
    const request = fc
      .oneof(
        query.filter((q) => !ImportQuerySchema.safeParse(q).success).map((q) => ({ q, body: validFile })),
        file.filter((b) => !new TextDecoder().decode(b).includes('time_s')).map((body) => ({ q: validQuery as Record<string, string>, body })),
      )
    await fc.assert(
      fc.asyncProperty(request, async ({ q, body }) => {
        const res = await fetch(`${BASE}/api/imports?${new URLSearchParams(q)}`, { method: 'POST', headers: { cookie: engineer.cookie, 'content-type': 'text/csv', origin: BASE }, body })
        expectRefusal('imports', { status: res.status, text: await res.text(), type: res.headers.get('content-type') }, { q, bytes: body.length })
      }),
      { numRuns: PER_ROUTE, endOnFailure: true },
    )
  })

  it('wrote nothing: no session, no user, no audit row', async () => {
    expect(seen.length).toBe(6 * PER_ROUTE)
    for (const t of TABLES) expect(await tableState(t), t).toEqual(before[t])
  })
})
