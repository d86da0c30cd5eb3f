// Behind a trusted reverse proxy (runtimeConfig trustedProxy): two more instances of the build on
// the suite's database, one told that one proxy appends X-Forwarded-For, one that a proxy writes
// RFC 7239 Forwarded. The suite's own server trusts no proxy (tests/e2e/security.test.ts).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, db, DEMO_PASSWORD, USERS, uniqueEmail } from './helpers'
import { startServer, type ExtraServer } from './servers'

let xff: ExtraServer
let forwarded: ExtraServer

beforeAll(async () => {
  ;[xff, forwarded] = await Promise.all([
    startServer({ NUXT_TRUSTED_PROXY_HOPS: '1', NUXT_TRUSTED_PROXY_HEADER: 'x-forwarded-for' }),
    startServer({ NUXT_TRUSTED_PROXY_HOPS: '1', NUXT_TRUSTED_PROXY_HEADER: 'forwarded' }),
  ])
})

afterAll(async () => {
  await db()('sign_in_throttle').where('throttle_key', 'like', 'address:%').orWhere('throttle_key', 'like', 'account:proxy-%').delete()
  await Promise.all([xff?.stop(), forwarded?.stop()])
})

async function signInVia(base: string, headers: Record<string, string>, email: string, password: string) {
  const c = new Client(base)
  const res = await c.request('POST', '/api/auth/login', { email, password }, headers)
  return { status: res.status, client: c }
}

const throttleRow = (address: string) => db()('sign_in_throttle').where('throttle_key', `address:${address}`).first()

describe('one trusted proxy appending X-Forwarded-For', () => {
  it('takes the client address from the entry the proxy appended, not from what the client wrote before it', async () => {
    const email = uniqueEmail('proxy-xff')
    await signInVia(xff.base, { 'x-forwarded-for': '6.6.6.6, 203.0.113.10' }, email, 'wrong-password-here')
    expect(await throttleRow('203.0.113.10')).toBeTruthy()
    expect(await throttleRow('6.6.6.6')).toBeUndefined()
    // and the session remembers where it was signed in from
    const { status, client } = await signInVia(xff.base, { 'x-forwarded-for': '203.0.113.20' }, 'race@redfern.test', DEMO_PASSWORD)
    expect(status).toBe(200)
    const mine = await client.get('/api/me/sessions')
    expect(mine.body.sessions.find((s: any) => s.current).address).toBe('203.0.113.20')
  })

  it('locks one address behind the proxy without locking the others', async () => {
    for (let i = 0; i < 20; i++) {
      const res = await signInVia(xff.base, { 'x-forwarded-for': '203.0.113.11' }, uniqueEmail('proxy-guess'), 'guessing-password')
      expect(res.status).toBe(401)
    }
    expect((await signInVia(xff.base, { 'x-forwarded-for': '203.0.113.11' }, uniqueEmail('proxy-guess'), 'guessing-password')).status).toBe(429)
    // another client of the same proxy is not affected
    expect((await signInVia(xff.base, { 'x-forwarded-for': '203.0.113.12' }, USERS.managerC, DEMO_PASSWORD)).status).toBe(200)
  })

  it('counts an IPv6 client by its /64', async () => {
    const email = uniqueEmail('proxy-v6')
    await signInVia(xff.base, { 'x-forwarded-for': '2001:db8:1:2::5' }, email, 'wrong-password-here')
    await signInVia(xff.base, { 'x-forwarded-for': '[2001:db8:1:2:ffff::9]:4431' }, email, 'wrong-password-here')
    expect((await throttleRow('2001:db8:1:2::/64')).failures).toBe(2)
  })

  it('believes X-Forwarded-Host in the cross-site check', async () => {
    const { client } = await signInVia(xff.base, { 'x-forwarded-for': '203.0.113.30' }, USERS.managerA, DEMO_PASSWORD)
    const profile = { name: 'proxied host probe', header: ['t', 'rpm'], mapping: { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' } }
    const res = await client.request('POST', '/api/logger-profiles', profile, { origin: 'https://crank.example', 'x-forwarded-host': 'crank.example', 'x-forwarded-for': '203.0.113.30' })
    expect(res.status).toBe(200)
    const forged = await client.request('POST', '/api/logger-profiles', { ...profile, name: 'forged host probe 2' }, { origin: 'https://rival.example', 'x-forwarded-host': 'crank.example', 'x-forwarded-for': '203.0.113.30' })
    expect(forged.status).toBe(403)
  })
})

describe('one trusted proxy writing RFC 7239 Forwarded', () => {
  it('takes the address from for= and the host from host=', async () => {
    const email = uniqueEmail('proxy-fwd')
    await signInVia(forwarded.base, { forwarded: 'for=6.6.6.7, for="192.0.2.60:1234";proto=https;host=crank.example' }, email, 'wrong-password-here')
    expect(await throttleRow('192.0.2.60')).toBeTruthy()
    expect(await throttleRow('6.6.6.7')).toBeUndefined()
    const { client } = await signInVia(forwarded.base, { forwarded: 'for=192.0.2.61;host=crank.example' }, USERS.raceB, DEMO_PASSWORD)
    const res = await client.request('POST', '/api/logger-profiles', { name: 'forwarded host probe', header: ['t', 'rpm'], mapping: { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' } }, { origin: 'https://crank.example', forwarded: 'for=192.0.2.61;host=crank.example' })
    expect(res.status).toBe(200)
  })
})
