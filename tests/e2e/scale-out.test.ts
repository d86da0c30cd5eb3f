// Two instances of the same build on one database, as behind a load balancer: a second server
// process is started here beside the one the suite runs (server A). A session signed in on A
// works on B (sealed cookie, same secret; the session row is in the shared database), a session
// ended on one instance is ended on the other, and the sign-in throttle counted through A holds
// on B (it lives in the database, not in a process).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { BASE, Client, db, signIn, uniqueEmail, USERS } from './helpers'
import { startServer, type ExtraServer } from './servers'

let serverB: ExtraServer | undefined
let baseB = ''
const created: string[] = []

beforeAll(async () => {
  serverB = await startServer()
  baseB = serverB.base
})

afterAll(async () => {
  // the throttle rows this file made (account keys of its users, the loopback address key)
  await db()('sign_in_throttle').whereIn('throttle_key', created.map((e) => `account:${e}`)).delete()
  await db()('sign_in_throttle').where('throttle_key', 'like', 'address:%').delete()
  await serverB?.stop()
})

describe('two instances on one database', () => {
  it('are two processes answering on two ports', async () => {
    expect(baseB).not.toBe(BASE)
    expect((await fetch(`${BASE}/api/health`)).status).toBe(200)
    expect((await fetch(`${baseB}/api/health`)).status).toBe(200)
    expect(serverB!.process.pid).toBeGreaterThan(0)
  })

  it('accept a session cookie signed in on the other one', async () => {
    const onA = await signIn(USERS.managerB)
    const onB = new Client(baseB)
    onB.cookie = onA.cookie
    const me = await onB.get('/api/me')
    expect(me.status).toBe(200)
    expect(me.body).toMatchObject({ email: USERS.managerB, role: 'team_manager', organisationName: 'Tidewater Apex Motorsport' })
    // and the team scope comes with it: B shows this manager their own team's engines only
    const engines = await onB.get('/api/engines')
    expect(engines.status).toBe(200)
    const fromA = await onA.get('/api/engines')
    expect(engines.body).toEqual(fromA.body)
    // without the cookie B knows nobody
    expect((await new Client(baseB).get('/api/me')).status).toBe(401)
  })

  it('share the sign-in throttle: five failures through A lock the account on B', async () => {
    const admin = await signIn(USERS.admin)
    const email = uniqueEmail('scale')
    created.push(email)
    const password = 'scale-out-pass-2026'
    const res = await admin.post('/api/users', { email, name: 'Scale Probe', role: 'mechanic', organisationId: 2, password })
    expect(res.status).toBe(201)
    // the right password works on B before any failure
    expect((await new Client(baseB).post('/api/auth/login', { email, password })).status).toBe(200)
    for (let i = 0; i < 5; i++) {
      expect((await new Client().post('/api/auth/login', { email, password: 'wrong-password-x' })).status).toBe(401)
    }
    const locked = await new Client(baseB).post('/api/auth/login', { email, password })
    expect(locked.status).toBe(429)
    expect(locked.body.message).toMatch(/Too many failed sign-ins/)
    // and back on A as well
    expect((await new Client().post('/api/auth/login', { email, password })).status).toBe(429)
    const row = await db()('sign_in_throttle').where('throttle_key', `account:${email}`).first()
    expect(row.failures).toBe(5)
  })

  it('end a session signed out on either one: the replayed cookie answers 401 on both, for reads and writes', async () => {
    const profile = { name: 'replay probe', header: ['t', 'rpm'], mapping: { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' } }
    for (const [signInOn, signOutOn] of [[BASE, baseB], [baseB, BASE]] as const) {
      const user = new Client(signInOn)
      expect((await user.post('/api/auth/login', { email: USERS.raceB, password: 'ledger-demo-2026' })).status).toBe(200)
      const sealed = user.cookie
      // live on both before the sign-out
      for (const base of [BASE, baseB]) {
        const copy = new Client(base)
        copy.cookie = sealed
        expect((await copy.get('/api/me')).status, base).toBe(200)
      }
      const out = new Client(signOutOn)
      out.cookie = sealed
      expect((await out.post('/api/auth/logout')).status).toBe(200)
      expect(out.cookie).toBe('') // the browser's copy is cleared...
      for (const base of [BASE, baseB]) {
        // ...and a copy kept elsewhere no longer reads or writes, on either instance
        const replay = new Client(base)
        replay.cookie = sealed
        const me = await replay.get('/api/me')
        expect(me.status, `GET /api/me on ${base}`).toBe(401)
        expect(me.body.message).toBe('Your session has ended: sign in again')
        replay.cookie = sealed
        expect((await replay.post('/api/logger-profiles', profile)).status, `POST on ${base}`).toBe(401)
      }
    }
    expect(Number((await db()('logger_profiles').where('name', 'replay probe').count({ n: '*' }).first())!.n)).toBe(0)
  })

  it('end every session of a user on both when the user signs out everywhere on one', async () => {
    const admin = await signIn(USERS.admin)
    const email = uniqueEmail('everywhere')
    created.push(email)
    const password = 'everywhere-pass-2026'
    expect((await admin.post('/api/users', { email, name: 'Two Laptops', role: 'race_engineer', organisationId: 3, password })).status).toBe(201)
    const onA = await signIn(email, password)
    const onB = new Client(baseB)
    expect((await onB.post('/api/auth/login', { email, password })).status).toBe(200)
    const res = await onB.delete('/api/me/sessions')
    expect(res.status).toBe(200)
    expect(res.body.ended).toBe(2)
    expect((await onA.get('/api/me')).status).toBe(401)
    const again = new Client(baseB)
    again.cookie = onA.cookie
    expect((await again.get('/api/me')).status).toBe(401)
  })
})
