// Two instances of the same build on one database, as behind a load balancer: a second server
// process is started here beside the one the suite runs (server A). A session signed in on A
// works on B (sealed cookie, same secret, no session store), and the sign-in throttle counted
// through A holds on B (it lives in the database, not in a process).
import { spawn, type ChildProcess } from 'node:child_process'
import { createServer } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { BASE, Client, db, signIn, uniqueEmail, USERS } from './helpers'

let serverB: ChildProcess | undefined
let baseB = ''
const created: string[] = []

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer()
    s.once('error', reject)
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port
      s.close(() => resolve(port))
    })
  })
}

beforeAll(async () => {
  const port = await freePort()
  baseB = `http://127.0.0.1:${port}`
  serverB = spawn(process.execPath, ['.output/server/index.mjs'], {
    // same database, same session secret and file store as server A; the scheduled job stays off
    env: { ...process.env, PORT: String(port), NITRO_HOST: '127.0.0.1', NUXT_PUBLIC_URL: baseB, NUXT_ALERTS_ENABLED: 'false' },
    stdio: ['ignore', 'ignore', 'inherit'],
  })
  const deadline = Date.now() + 60_000
  for (;;) {
    try {
      if ((await fetch(`${baseB}/api/health`)).ok) break
    } catch {}
    if (serverB.exitCode !== null) throw new Error(`server B exited with ${serverB.exitCode}`)
    if (Date.now() > deadline) throw new Error('server B did not become ready')
    await new Promise((r) => setTimeout(r, 250))
  }
})

afterAll(async () => {
  // the throttle rows this file made (account keys of its users, the loopback address key)
  await db()('sign_in_throttle').whereIn('throttle_key', created.map((e) => `account:${e}`)).delete()
  await db()('sign_in_throttle').where('throttle_key', 'like', 'address:%').delete()
  if (serverB && serverB.exitCode === null) {
    const exited = new Promise((r) => serverB!.once('exit', r))
    serverB.kill('SIGTERM')
    await exited
  }
})

describe('two instances on one database', () => {
  it('are two processes answering on two ports', async () => {
    expect(baseB).not.toBe(BASE)
    expect((await fetch(`${BASE}/api/health`)).status).toBe(200)
    expect((await fetch(`${baseB}/api/health`)).status).toBe(200)
    expect(serverB!.pid).toBeGreaterThan(0)
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
})
