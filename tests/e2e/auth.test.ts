import { describe, expect, it, afterAll } from 'vitest'
import { Client, db, signIn, uniqueEmail, USERS, DEMO_PASSWORD } from './helpers'

afterAll(async () => {
  // Leave no lock behind for the files that follow (they sign in from the same address).
  await db()('sign_in_throttle').delete()
})

describe('sign-in', () => {
  it('signs in with the right password and answers who is signed in', async () => {
    const client = await signIn(USERS.managerA)
    const me = await client.get('/api/me')
    expect(me.status).toBe(200)
    expect(me.body).toMatchObject({ email: USERS.managerA, role: 'team_manager', organisationName: 'Marlowe Vane Racing', organisationKind: 'team' })
  })

  it('refuses a wrong password with 401 and no session', async () => {
    const client = new Client()
    const res = await client.post('/api/auth/login', { email: USERS.raceB, password: 'not-the-password' })
    expect(res.status).toBe(401)
    expect(res.body.message).toBe('E-mail or password is wrong.')
    expect((await client.get('/api/me')).status).toBe(401)
  })

  it('answers an unknown account exactly like a wrong password', async () => {
    const res = await new Client().post('/api/auth/login', { email: 'nobody@example.test', password: 'whatever-it-is' })
    expect(res.status).toBe(401)
    expect(res.body.message).toBe('E-mail or password is wrong.')
  })

  it('rejects a malformed body with 400 naming the field', async () => {
    const res = await new Client().post('/api/auth/login', { email: 'not-an-email', password: 'x' })
    expect(res.status).toBe(400)
    expect(res.body.message).toContain('email')
    expect(res.body.data.issues[0].path).toBe('email')
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.mjs/)
  })

  it('signs out and the old cookie no longer works', async () => {
    const client = await signIn(USERS.raceA)
    const cookie = client.cookie
    await client.post('/api/auth/logout')
    expect((await client.get('/api/me')).status).toBe(401)
    // Sign-out ends the session on the server: a copy of the cookie kept elsewhere is refused too.
    const stale = new Client()
    stale.cookie = cookie
    expect((await stale.get('/api/me')).status).toBe(401)
  })
})

describe('throttling', () => {
  it('locks an account after five failures, with a clear message, even for the right password', async () => {
    const admin = await signIn(USERS.admin)
    const email = uniqueEmail('throttle')
    const created = await admin.post('/api/users', { email, name: 'Throttle Probe', role: 'mechanic', organisationId: 2, password: 'probe-password-2026' })
    expect(created.status).toBe(201)
    for (let i = 0; i < 5; i++) {
      const res = await new Client().post('/api/auth/login', { email, password: 'wrong-password-x' })
      expect(res.status).toBe(401)
    }
    const locked = await new Client().post('/api/auth/login', { email, password: 'probe-password-2026' })
    expect(locked.status).toBe(429)
    expect(locked.body.message).toMatch(/Too many failed sign-ins\. Try again in 15 minute/)
    const row = await db()('sign_in_throttle').where('throttle_key', `account:${email}`).first()
    expect(row.failures).toBe(5)
    // Other accounts from the same address still sign in.
    expect((await new Client().post('/api/auth/login', { email: USERS.managerC, password: DEMO_PASSWORD })).status).toBe(200)
  })
})

describe('deactivated users', () => {
  it('cannot sign in, and their existing session stops working at once', async () => {
    const admin = await signIn(USERS.admin)
    const email = uniqueEmail('leaver')
    const created = await admin.post('/api/users', { email, name: 'Soon Gone', role: 'race_engineer', organisationId: 2, password: 'leaver-password-2026' })
    expect(created.status).toBe(201)
    const leaver = await signIn(email, 'leaver-password-2026')
    expect((await leaver.get('/api/me')).status).toBe(200)

    const off = await admin.patch(`/api/users/${created.body.id}`, { active: false })
    expect(off.status).toBe(200)
    expect(off.body.active).toBe(false)

    const after = await leaver.get('/api/me')
    expect(after.status).toBe(401)
    expect(after.body.message).toBe('Your session has ended: sign in again')
    // refused like any wrong password: the answer does not confirm the password
    const again = await new Client().post('/api/auth/login', { email, password: 'leaver-password-2026' })
    expect(again.status).toBe(401)
    expect(again.body.message).toBe('E-mail or password is wrong.')
    const audit = await db()('audit_log').where({ entity: 'user', entity_id: String(created.body.id), action: 'update' }).first()
    expect(typeof audit.after_value === 'string' ? JSON.parse(audit.after_value) : audit.after_value).toMatchObject({ active: false })
  })
})

describe('a deactivated account confirms nothing', () => {
  it('answers the right password exactly as a wrong one, and as an unknown e-mail', async () => {
    const admin = await signIn(USERS.admin)
    const email = uniqueEmail('dormant')
    const password = 'dormant-password-2026'
    const created = await admin.post('/api/users', { email, name: 'Dormant Account', role: 'mechanic', organisationId: 2, password })
    expect(created.status).toBe(201)
    expect((await admin.patch(`/api/users/${created.body.id}`, { active: false })).status).toBe(200)

    const answer = async (e: string, p: string) => {
      const res = await new Client().post('/api/auth/login', { email: e, password: p })
      return { status: res.status, body: res.body, type: res.headers.get('content-type'), cookie: res.headers.getSetCookie().length }
    }
    const rightPassword = await answer(email, password)
    const wrongPassword = await answer(email, 'not-the-password-26')
    const unknown = await answer(uniqueEmail('nobody'), password)
    expect(rightPassword.status).toBe(401)
    expect(rightPassword.body.message).toBe('E-mail or password is wrong.')
    expect(rightPassword).toEqual(wrongPassword)
    expect(rightPassword).toEqual(unknown)
    expect(JSON.stringify(rightPassword.body)).not.toMatch(/deactivat/i)
    // and both count as failures towards the account's lock, as any wrong password does
    const row = await db()('sign_in_throttle').where('throttle_key', `account:${email}`).first()
    expect(row.failures).toBe(2)
  })
})

describe('the per-address throttle (one NAT or proxy for a whole team)', () => {
  it('locks an address after 20 failures for accounts never signed in from it, but not for those that were', async () => {
    const admin = await signIn(USERS.admin)
    const make = async (prefix: string) => {
      const email = uniqueEmail(prefix)
      const password = `${prefix}-password-2026`
      expect((await admin.post('/api/users', { email, name: `Behind ${prefix}`, role: 'race_engineer', organisationId: 2, password })).status).toBe(201)
      return { email, password }
    }
    const regular = await make('regular') // has signed in from this address before
    const newcomer = await make('newcomer') // never has
    expect((await new Client().post('/api/auth/login', regular)).status).toBe(200)
    await db()('sign_in_throttle').where('throttle_key', 'like', 'address:%').delete()
    try {
      // someone behind the same address guesses at 20 accounts
      for (let i = 0; i < 20; i++) {
        const res = await new Client().post('/api/auth/login', { email: uniqueEmail('guess'), password: 'guessing-password' })
        expect(res.status).toBe(401)
      }
      const spray = await new Client().post('/api/auth/login', { email: uniqueEmail('guess'), password: 'guessing-password' })
      expect(spray.status).toBe(429)
      const lock = await db()('sign_in_throttle').where('throttle_key', 'address:127.0.0.1').first()
      expect(lock.failures).toBe(20)
      expect(lock.locked_until).not.toBeNull()

      // the regular signs in all the same, and a typo of theirs is an ordinary wrong password
      expect((await new Client().post('/api/auth/login', { email: regular.email, password: 'typo-password-2026' })).status).toBe(401)
      const ok = await new Client().post('/api/auth/login', regular)
      expect(ok.status).toBe(200)
      // the newcomer waits for the lock to pass, as the guesser does
      expect((await new Client().post('/api/auth/login', newcomer)).status).toBe(429)
      // the regular's success does not unlock the address for everyone
      expect((await new Client().post('/api/auth/login', newcomer)).status).toBe(429)
    } finally {
      await db()('sign_in_throttle').where('throttle_key', 'like', 'address:%').delete()
    }
    expect((await new Client().post('/api/auth/login', newcomer)).status).toBe(200)
  })
})

describe('users and passwords', () => {
  it('refuses a short or common password, naming the field', async () => {
    const admin = await signIn(USERS.admin)
    const short = await admin.post('/api/users', { email: uniqueEmail(), name: 'Short Pass', role: 'mechanic', organisationId: 2, password: 'short' })
    expect(short.status).toBe(400)
    expect(short.body.message).toMatch(/password: must be at least 10 characters/)
    const common = await admin.post('/api/users', { email: uniqueEmail(), name: 'Common Pass', role: 'mechanic', organisationId: 2, password: 'password123' })
    expect(common.status).toBe(400)
    expect(common.body.message).toMatch(/password: is one of the commonest passwords/)
  })

  it('lets a team manager manage only their own team', async () => {
    const manager = await signIn(USERS.managerA)
    const list = await manager.get('/api/users')
    expect(list.status).toBe(200)
    expect(new Set(list.body.map((u: any) => u.organisationName))).toEqual(new Set(['Marlowe Vane Racing']))
    const other = await manager.post('/api/users', { email: uniqueEmail(), name: 'Other Team', role: 'mechanic', organisationId: 3, password: 'other-team-pass-26' })
    expect(other.status).toBe(404)
    const adminRole = await manager.post('/api/users', { email: uniqueEmail(), name: 'Made Admin', role: 'supplier_engineer', organisationId: 2, password: 'made-admin-pass-26' })
    expect(adminRole.status).toBe(400)
    const outsider = (await db()('users').where('email', USERS.managerB).first()).id
    expect((await manager.patch(`/api/users/${outsider}`, { active: false })).status).toBe(404)
  })

  it('refuses a duplicate e-mail with 409', async () => {
    const admin = await signIn(USERS.admin)
    const res = await admin.post('/api/users', { email: USERS.raceA, name: 'Twin', role: 'mechanic', organisationId: 2, password: 'twin-password-2026' })
    expect(res.status).toBe(409)
    expect(res.body.message).toContain(USERS.raceA)
  })
})
