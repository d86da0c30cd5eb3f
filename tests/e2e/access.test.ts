// Walks every API route the app registers — the list is derived from the files under server/api,
// not kept by hand — as every role and as a member of another team. A new route without the guard,
// or without a stated expectation below, fails here.
import { readdirSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { beforeAll, describe, expect, it } from 'vitest'
import { Client, db, signIn, USERS } from './helpers'

type Role = 'admin' | 'supplier_engineer' | 'team_manager' | 'race_engineer' | 'mechanic'
const ALL: Role[] = ['admin', 'supplier_engineer', 'team_manager', 'race_engineer', 'mechanic']
const SUPPLIER: Role[] = ['admin', 'supplier_engineer']
const WRITERS: Role[] = ['admin', 'supplier_engineer', 'team_manager', 'race_engineer']
const TEARDOWN: Role[] = ['admin', 'supplier_engineer', 'mechanic']
const STATEMENT_READERS: Role[] = ['admin', 'supplier_engineer', 'team_manager']

interface Route { method: string; path: string; file: string }

function apiRoutes(): Route[] {
  const root = join(process.cwd(), 'server/api')
  const out: Route[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = join(dir, name)
      if (statSync(full).isDirectory()) walk(full)
      else {
        const m = /^(.*)\.(get|head|post|put|patch|delete)\.ts$/.exec(relative(root, full))
        if (!m) throw new Error(`route file without a method suffix: ${full}`)
        const path = `/api/${m[1]!.replace(/(^|\/)index$/, '')}`.replace(/\/$/, '')
        out.push({ method: m[2]!.toUpperCase(), path, file: relative(process.cwd(), full) })
      }
    }
  }
  walk(root)
  return out
}

// The payment webhook is admitted by the service's signature, not a session (tests/e2e/billing.test.ts).
const PUBLIC = new Set(['POST /api/auth/login', 'POST /api/auth/logout', 'GET /api/health', 'POST /api/billing/webhook'])

/** Which roles may read each GET route (expect 200 on their own organisation's records; everyone else 403). */
const READ_ROLES: Record<string, Role[]> = {
  '/api/admin/outbox': ['admin'],
  '/api/admin/task-runs': ['admin'],
  '/api/alerts': ALL,
  '/api/alerts/engines': ALL,
  '/api/allocation': ['admin', 'supplier_engineer', 'team_manager', 'race_engineer'],
  '/api/audit': SUPPLIER,
  '/api/billing/contracts': SUPPLIER,
  '/api/billing/statements': STATEMENT_READERS,
  '/api/billing/statements/[id]': STATEMENT_READERS,
  '/api/billing/statements/[id]/csv': STATEMENT_READERS,
  '/api/board': ALL,
  '/api/component-types': ALL,
  '/api/component-types/[id]/evidence': SUPPLIER,
  '/api/engine-types': ALL,
  '/api/engines/[id]': ALL,
  '/api/engines/[id]/charts': ALL,
  '/api/engines/[id]/sessions': ALL,
  '/api/engines': ALL,
  '/api/events': ALL,
  '/api/logger-profiles': WRITERS,
  '/api/me': ALL,
  '/api/me/alert-prefs': ALL,
  '/api/me/sessions': ALL,
  '/api/oil/engines/[id]': ALL,
  '/api/oil': ALL,
  '/api/oil/limits/[id]': ALL,
  '/api/oil/limits': ALL,
  '/api/oil/mappings': WRITERS,
  '/api/oil/samples/[id]': ALL,
  '/api/organisations': ALL,
  '/api/parts/[id]': ALL,
  '/api/parts/[id]/wear': ALL,
  '/api/parts/[id]/history.csv': ALL,
  '/api/parts': ALL,
  '/api/sessions/[id]': ALL,
  '/api/sessions': ALL,
  '/api/teardowns/findings': TEARDOWN,
  '/api/teardowns/[id]': ALL,
  '/api/teardowns/[id]/measurements.csv': ALL,
  '/api/teardowns': ALL,
  '/api/users': ['admin', 'team_manager'],
}
/** GET routes whose record may not exist in the demo (answer 404 for everyone with the role). */
const NO_DEMO_RECORD = new Set(['/api/oil/samples/[id]/report', '/api/teardown-photos/[id]'])

const ROLE_USER: Record<Role, string> = {
  admin: USERS.admin,
  supplier_engineer: USERS.supplierEngineer,
  team_manager: USERS.managerA,
  race_engineer: USERS.raceA,
  mechanic: USERS.mechanicA,
}

let ids: Record<string, number>
const clients: Partial<Record<Role | 'otherManager' | 'otherRace', Client>> = {}

/** A concrete path with the ids of records that belong to team A (Marlowe Vane Racing). */
function concrete(path: string): string {
  return path.replace(/\/([a-z-]+)\/\[(\w+)\]/g, (_m, folder: string, param: string) => `/${folder}/${ids[`${folder}.${param}`] ?? 999_999}`).replace(/\[(\w+)\]/g, (_m, param: string) => String(ids[param] ?? 999_999))
}

beforeAll(async () => {
  const engine = await db()('engines').where('serial', 'KV8-1101').first()
  const inst = await db()('installations').where({ engine_id: engine.id }).whereNull('to_at').orderBy('id').first()
  const session = await db()('sessions').where('engine_id', engine.id).first()
  const event = await db()('events').where('series', 'Meridian Endurance GT').where('starts_at', '>', new Date()).orderBy('starts_at').first()
  const user = await db()('users').where('email', USERS.raceA).first()
  const sample = await db()('oil_samples').where('engine_id', engine.id).first()
  // a signed-off demo teardown of Marlowe's KT4-2201 (team A)
  const teardown = await db()('teardowns as t').join('engines as e', 'e.id', 't.engine_id').where('e.serial', 'KT4-2201').orderBy('t.id').first('t.id')
  const statement = await db()('statements').where('team_id', engine.team_id).first('id')
  ids = {
    'engines.id': engine.id,
    'oil/engines.id': engine.id,
    'engines.engineId': engine.id,
    'plans.engineId': engine.id,
    'installations.id': inst.id,
    'parts.id': inst.component_id,
    'sessions.id': session.id,
    'events.id': event.id,
    'users.id': user.id,
    'component-types.id': 1,
    'engine-types.id': 1,
    'limits.id': 1,
    'samples.id': sample?.id ?? 999_999,
    'teardowns.id': teardown.id,
    'statements.id': statement.id,
  }
  for (const role of ALL) clients[role] = await signIn(ROLE_USER[role])
  clients.otherManager = await signIn(USERS.managerB)
  clients.otherRace = await signIn(USERS.raceB)
})

const routes = apiRoutes()

describe('every API route goes through the guard', () => {
  it('finds the routes from the files', () => {
    expect(routes.length).toBeGreaterThan(50)
  })

  it.each(routes.filter((r) => !PUBLIC.has(`${r.method} ${r.path}`)).map((r) => [`${r.method} ${r.path}`, r] as const))('%s answers 401 without a session', async (_name, r) => {
    const res = await new Client().request(r.method, concrete(r.path), r.method === 'GET' || r.method === 'HEAD' || r.method === 'DELETE' ? undefined : {})
    expect(res.status, r.file).toBe(401)
  })

  it('states who may read every GET route', () => {
    const unknown = routes.filter((r) => r.method === 'GET' && !PUBLIC.has(`GET ${r.path}`) && !(r.path in READ_ROLES) && !NO_DEMO_RECORD.has(r.path))
    expect(unknown.map((r) => r.file), 'add the route to READ_ROLES or NO_DEMO_RECORD').toEqual([])
  })
})

describe('roles and organisations on every GET route', () => {
  const gets = routes.filter((r) => r.method === 'GET' && !PUBLIC.has(`GET ${r.path}`))
  it.each(gets.map((r) => [r.path, r] as const))('%s: allowed roles read their own team\'s record, others get 403, another team gets 404', async (_p, r) => {
    const url = concrete(r.path)
    for (const role of ALL) {
      const res = await clients[role]!.get(url)
      const expected = NO_DEMO_RECORD.has(r.path) ? [403, 404] : READ_ROLES[r.path]!.includes(role) ? [200] : [403]
      expect(expected, `${role} ${url} answered ${res.status}: ${JSON.stringify(res.body).slice(0, 200)}`).toContain(res.status)
    }
    if (/\/(engines|parts|sessions|installations|users|samples|teardowns|statements)\/\d+/.test(url)) {
      for (const other of ['otherManager', 'otherRace'] as const) {
        const res = await clients[other]!.get(url)
        expect([403, 404], `${other} ${url}`).toContain(res.status)
        expect(JSON.stringify(res.body)).not.toContain('KV8-1101')
      }
    }
  })
})

describe('another team cannot change team A\'s records', () => {
  const writes = routes.filter((r) => r.method !== 'GET' && !PUBLIC.has(`${r.method} ${r.path}`) && r.path.includes('['))
  it.each(writes.map((r) => [`${r.method} ${r.path}`, r] as const))('%s is refused for a member of another team', async (_n, r) => {
    const before = await db()('audit_log').count({ n: '*' }).first()
    for (const other of ['otherManager', 'otherRace'] as const) {
      const res = await clients[other]!.request(r.method, concrete(r.path), r.method === 'DELETE' || r.method === 'HEAD' ? undefined : {})
      expect([400, 403, 404, 409], `${other} ${r.method} ${concrete(r.path)} answered ${res.status}`).toContain(res.status)
    }
    const after = await db()('audit_log').count({ n: '*' }).first()
    expect(Number(after!.n)).toBe(Number(before!.n))
  })
})

describe('who may void and restore a session', () => {
  const VOIDERS: Role[] = ['admin', 'supplier_engineer', 'race_engineer']
  it.each(['void', 'restore'])('POST /api/sessions/[id]/%s: the race engineer and the supplier reach validation (400), other roles 403, nothing written', async (action) => {
    const before = await db()('audit_log').count({ n: '*' }).first()
    for (const role of ALL) {
      // A reason that is not text: allowed roles are stopped by validation, so no session changes.
      const res = await clients[role]!.post(`/api/sessions/${ids['sessions.id']}/${action}`, { reason: 7 })
      expect(res.status, `${role} ${action} answered ${res.status}`).toBe(VOIDERS.includes(role) ? 400 : 403)
    }
    const after = await db()('audit_log').count({ n: '*' }).first()
    expect(Number(after!.n)).toBe(Number(before!.n))
  })
})

describe('releasing a part by concession', () => {
  it('POST /api/parts/[id]/concessions: every role but the supplier engineer and admin gets 403; they get 400 for an empty body, and nothing is written', async () => {
    const url = concrete('/api/parts/[id]/concessions')
    for (const role of ALL) {
      const res = await clients[role]!.post(url, {})
      expect(res.status, `${role} ${url}`).toBe(SUPPLIER.includes(role) ? 400 : 403)
    }
    expect(await db()('part_concessions').where('component_id', ids['parts.id']).first()).toBeUndefined()
  })
})

describe('engine allocation writes, by role', () => {
  const PLANNERS: Role[] = ['admin', 'supplier_engineer', 'team_manager']
  // Bodies that pass the guard and stop at validation or at a missing entry, so nothing is written.
  const calls: [string, string, unknown, Role[]][] = [
    ['POST', '/api/allocation/solve', { teamId: 'x' }, PLANNERS],
    ['POST', '/api/allocation/accept', {}, PLANNERS],
    ['PUT', '/api/allocation/entries', {}, PLANNERS],
    ['PUT', '/api/allocation/workshop-week', {}, SUPPLIER],
  ]
  it('lists every allocation write route here', () => {
    const mine = routes.filter((r) => r.path.startsWith('/api/allocation') && r.method !== 'GET').map((r) => `${r.method} ${r.path}`).sort()
    expect(mine).toEqual(calls.map(([m, p]) => `${m} ${p}`).sort())
  })
  it.each(calls.map((c) => [`${c[0]} ${c[1]}`, c] as const))('%s: allowed roles reach validation (400), the others get 403', async (_n, [method, path, body, allowed]) => {
    for (const role of ALL) {
      const res = await clients[role]!.request(method, path, body)
      expect(res.status, `${role} ${method} ${path}: ${JSON.stringify(res.body).slice(0, 200)}`).toBe(allowed.includes(role) ? 400 : 403)
    }
  })
  it("another team's allocation answers 404", async () => {
    const teamA = await db()('organisations').where('name', 'Marlowe Vane Racing').first()
    for (const other of ['otherManager', 'otherRace'] as const) {
      expect((await clients[other]!.get(`/api/allocation?teamId=${teamA.id}`)).status).toBe(404)
    }
    expect((await clients.otherManager!.post('/api/allocation/solve', { teamId: teamA.id })).status).toBe(404)
  })
})

describe('previewing and saving a limit change', () => {
  const routes = ['/api/component-types/[id]/preview', '/api/component-types/[id]/limits', '/api/engine-types/[id]/preview', '/api/engine-types/[id]/limits']
  it.each(routes)('POST %s: the supplier engineer and admin reach validation (400), every other role 403, nothing written', async (path) => {
    const before = await db()('audit_log').count({ n: '*' }).first()
    for (const role of ALL) {
      const res = await clients[role]!.post(concrete(path), {})
      expect(res.status, `${role} ${path}`).toBe(SUPPLIER.includes(role) ? 400 : 403)
    }
    const after = await db()('audit_log').count({ n: '*' }).first()
    expect(Number(after!.n)).toBe(Number(before!.n))
  })
})
