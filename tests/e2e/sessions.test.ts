// Server-side sessions: a sealed cookie grants nothing once its session row has ended. Every way
// a session ends is walked here on the suite's server; tests/e2e/scale-out.test.ts checks the
// same across two instances.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, db, DEMO_PASSWORD, signIn, uniqueEmail, USERS } from './helpers'
import { startServer } from './servers'

let admin: Client
const created: string[] = []

beforeAll(async () => {
  admin = await signIn(USERS.admin)
})

afterAll(async () => {
  await db()('sign_in_throttle').whereIn('throttle_key', created.map((e) => `account:${e}`)).delete()
})

/** A fresh race engineer of Marlowe Vane Racing (so that ending their sessions touches no other test). */
async function newUser(prefix: string, role = 'race_engineer') {
  const email = uniqueEmail(prefix)
  created.push(email)
  const password = `${prefix}-password-2026`
  const res = await admin.post('/api/users', { email, name: `Probe ${prefix}`, role, organisationId: 2, password })
  expect(res.status).toBe(201)
  return { email, password, id: res.body.id as number }
}

function replay(cookie: string) {
  const c = new Client()
  c.cookie = cookie
  return c
}

async function rowOf(cookieClient: Client) {
  // the newest row of the user behind this client
  const me = await cookieClient.get('/api/me')
  return db()('auth_sessions').where('user_id', me.body.id).orderBy('created_at', 'desc').first()
}

describe('sign-out', () => {
  it('ends the session on the server: the same sealed cookie replayed afterwards reads and writes nothing', async () => {
    const race = await signIn(USERS.raceA)
    const sealed = race.cookie
    expect((await replay(sealed).get('/api/me')).status).toBe(200)
    const out = await race.post('/api/auth/logout')
    expect(out.status).toBe(200)
    expect(race.cookie).toBe('')
    const me = await replay(sealed).get('/api/me')
    expect(me.status).toBe(401)
    expect(me.body.message).toBe('Your session has ended: sign in again')
    const write = await replay(sealed).post('/api/logger-profiles', { name: 'after sign-out', header: ['t', 'rpm'], mapping: { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' } })
    expect(write.status).toBe(401)
    // nuxt-auth-utils' own session endpoint does not vouch for it either
    expect((await replay(sealed).get('/api/_auth/session')).status).toBe(401)
  })

  it('records why and when the session ended', async () => {
    const u = await newUser('signout')
    const c = await signIn(u.email, u.password)
    const sealed = c.cookie
    await c.post('/api/auth/logout')
    const row = await db()('auth_sessions').where('user_id', u.id).orderBy('created_at', 'desc').first()
    expect(row.end_reason).toBe('sign-out')
    expect(row.ended_at).not.toBeNull()
    expect((await replay(sealed).get('/api/me')).status).toBe(401)
  })

  it('ends the session through nuxt-auth-utils\' DELETE /api/_auth/session too, and its GET never shows the session id', async () => {
    const u = await newUser('authutils')
    const c = await signIn(u.email, u.password)
    const sealed = c.cookie
    const got = await c.get('/api/_auth/session')
    expect(got.status).toBe(200)
    expect(got.body.user.id).toBe(u.id)
    expect(JSON.stringify(got.body)).not.toContain('sid')
    expect((await c.delete('/api/_auth/session')).status).toBe(200)
    expect((await replay(sealed).get('/api/me')).status).toBe(401)
  })

  it('a new sign-in in the same browser ends the session it replaces', async () => {
    const u = await newUser('again')
    const c = await signIn(u.email, u.password)
    const first = c.cookie
    expect((await c.post('/api/auth/login', { email: u.email, password: u.password })).status).toBe(200)
    expect(c.cookie).not.toBe(first)
    expect((await replay(first).get('/api/me')).status).toBe(401)
    expect((await c.get('/api/me')).status).toBe(200)
  })
})

describe('sign out everywhere', () => {
  it('lists the user\'s own sessions, marks this one, and ends them all', async () => {
    const u = await newUser('everywhere')
    const laptop = await signIn(u.email, u.password)
    const tablet = await signIn(u.email, u.password)
    const list = await laptop.get('/api/me/sessions')
    expect(list.status).toBe(200)
    expect(list.body.idleSeconds).toBe(1800)
    expect(list.body.lifetimeSeconds).toBe(43200)
    expect(list.body.sessions).toHaveLength(2)
    expect(list.body.sessions.filter((s: any) => s.current)).toHaveLength(1)
    expect(list.body.sessions[0]).toMatchObject({ address: '127.0.0.1' })
    expect(JSON.stringify(list.body)).not.toMatch(/"id"/)
    // only the user's own: the live rows of this user, no one else's
    const live = await db()('auth_sessions').where('user_id', u.id).whereNull('ended_at')
    expect(live).toHaveLength(2)

    const res = await tablet.delete('/api/me/sessions')
    expect(res.status).toBe(200)
    expect(res.body.ended).toBe(2)
    expect((await laptop.get('/api/me')).status).toBe(401)
    expect((await tablet.get('/api/me')).status).toBe(401)
    // and the user signs in again as usual
    expect((await (await signIn(u.email, u.password)).get('/api/me')).status).toBe(200)
    const audit = await db()('audit_log').where({ entity: 'user', entity_id: String(u.id), action: 'sign-out-everywhere' }).first()
    expect(audit).toBeTruthy()
  })
})

describe('changes by an admin or manager end the user\'s sessions', () => {
  it('a new role ends them', async () => {
    const u = await newUser('role')
    const c = await signIn(u.email, u.password)
    expect((await admin.patch(`/api/users/${u.id}`, { role: 'mechanic' })).status).toBe(200)
    expect((await c.get('/api/me')).status).toBe(401)
    expect((await db()('auth_sessions').where('user_id', u.id).first()).end_reason).toBe('role')
    const again = await signIn(u.email, u.password)
    expect((await again.get('/api/me')).body.role).toBe('mechanic')
  })

  it('a new password ends them (set by the team manager)', async () => {
    const u = await newUser('password')
    const c = await signIn(u.email, u.password)
    const manager = await signIn(USERS.managerA)
    expect((await manager.patch(`/api/users/${u.id}`, { password: 'a-brand-new-pass-2026' })).status).toBe(200)
    expect((await c.get('/api/me')).status).toBe(401)
    expect((await db()('auth_sessions').where('user_id', u.id).first()).end_reason).toBe('password')
    expect((await new Client().post('/api/auth/login', { email: u.email, password: 'a-brand-new-pass-2026' })).status).toBe(200)
  })

  it('deactivation ends them', async () => {
    const u = await newUser('deact')
    const c = await signIn(u.email, u.password)
    expect((await admin.patch(`/api/users/${u.id}`, { active: false })).status).toBe(200)
    expect((await c.get('/api/me')).status).toBe(401)
    expect((await db()('auth_sessions').where('user_id', u.id).first()).end_reason).toBe('deactivated')
  })

  it('a change of name alone ends nothing', async () => {
    const u = await newUser('rename')
    const c = await signIn(u.email, u.password)
    expect((await admin.patch(`/api/users/${u.id}`, { name: 'Renamed Probe' })).status).toBe(200)
    expect((await c.get('/api/me')).body.name).toBe('Renamed Probe')
  })
})

describe('timeouts (runtimeConfig sessionIdleTimeout and session.maxAge)', () => {
  it('ends a session idle for longer than the idle timeout', async () => {
    const u = await newUser('idle')
    const c = await signIn(u.email, u.password)
    const row = await rowOf(c)
    // 31 minutes without a request (the default idle timeout is 30)
    await db()('auth_sessions').where('id', row.id).update({ last_seen_at: new Date(Date.now() - 31 * 60_000) })
    expect((await c.get('/api/me')).status).toBe(401)
    expect((await db()('auth_sessions').where('id', row.id).first()).end_reason).toBe('idle')
  })

  it('keeps a session in use alive: requests move last_seen_at on', async () => {
    const u = await newUser('active')
    const c = await signIn(u.email, u.password)
    const row = await rowOf(c)
    const stale = new Date(Date.now() - 29 * 60_000)
    await db()('auth_sessions').where('id', row.id).update({ last_seen_at: stale })
    expect((await c.get('/api/me')).status).toBe(200)
    const after = await db()('auth_sessions').where('id', row.id).first()
    expect(new Date(after.last_seen_at).getTime()).toBeGreaterThan(Date.now() - 60_000)
  })

  it('ends a session past its absolute lifetime however active', async () => {
    const u = await newUser('absolute')
    const c = await signIn(u.email, u.password)
    const row = await rowOf(c)
    const lifetime = new Date(row.expires_at).getTime() - new Date(row.created_at).getTime()
    expect(lifetime).toBe(12 * 3600_000)
    await db()('auth_sessions').where('id', row.id).update({ expires_at: new Date(Date.now() - 1000) })
    expect((await c.get('/api/me')).status).toBe(401)
    expect((await db()('auth_sessions').where('id', row.id).first()).end_reason).toBe('expired')
  })
})

describe('timeouts set through runtimeConfig, on an instance started with short ones', () => {
  const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

  it('NUXT_SESSION_IDLE_TIMEOUT and NUXT_SESSION_MAX_AGE end sessions in real time', async () => {
    const server = await startServer({ NUXT_SESSION_IDLE_TIMEOUT: '2', NUXT_SESSION_MAX_AGE: '5' })
    try {
      const signInThere = async () => {
        const c = new Client(server.base)
        expect((await c.post('/api/auth/login', { email: USERS.managerC, password: DEMO_PASSWORD })).status).toBe(200)
        return c
      }
      const listed = await (await signInThere()).get('/api/me/sessions')
      expect(listed.body).toMatchObject({ idleSeconds: 2, lifetimeSeconds: 5 })

      // idle: nothing for 3 s
      const idle = await signInThere()
      await sleep(3000)
      expect((await idle.get('/api/me')).status).toBe(401)

      // absolute: in use every 0.5 s, still ended 5 s after sign-in
      const busy = await signInThere()
      const started = Date.now()
      let last = 200
      while (Date.now() - started < 4000) {
        last = (await busy.get('/api/me')).status
        expect(last, `${Date.now() - started} ms after sign-in`).toBe(200)
        await sleep(500)
      }
      await sleep(Math.max(0, 5200 - (Date.now() - started)))
      expect((await busy.get('/api/me')).status).toBe(401)
    } finally {
      await server.stop()
    }
  })
})

