import { describe, expect, it } from 'vitest'
import { BASE, signIn, USERS } from './helpers'

describe('response headers', () => {
  it('sends a same-origin Content-Security-Policy, nosniff, a strict referrer policy and no framing on pages', async () => {
    const res = await fetch(`${BASE}/login`)
    expect(res.status).toBe(200)
    const csp = res.headers.get('content-security-policy')!
    expect(csp).toContain("default-src 'self'")
    expect(csp).toContain("frame-ancestors 'none'")
    expect(csp).toContain("object-src 'none'")
    // Inline scripts are allowed by hash only, never wholesale.
    expect(csp).toMatch(/script-src 'self'( 'sha256-[A-Za-z0-9+/=]+')*(;|$)/)
    expect(csp).not.toMatch(/script-src[^;]*'unsafe-inline'/)
    expect(res.headers.get('x-content-type-options')).toBe('nosniff')
    expect(res.headers.get('referrer-policy')).toBe('same-origin')
    expect(res.headers.get('x-frame-options')).toBe('DENY')
    const html = await res.text()
    expect(html).not.toMatch(/https?:\/\/(?!127\.0\.0\.1|localhost)[a-z0-9.-]+\.[a-z]{2,}\/[^"']*\.(js|css|woff2?)/i)
  })

  it('sends a locked-down policy with every API answer, errors included', async () => {
    for (const path of ['/api/health', '/api/me', '/api/nowhere']) {
      const res = await fetch(`${BASE}${path}`)
      // Error answers carry the server's own error policy; both forbid scripts and framing.
      const csp = res.headers.get('content-security-policy') ?? ''
      expect(csp, path).toContain("frame-ancestors 'none'")
      expect(csp, path).toMatch(/default-src 'none'|script-src 'none'/)
      expect(res.headers.get('x-content-type-options'), path).toBe('nosniff')
    }
  })
})

describe('cross-site requests', () => {
  it('refuses a state-changing request with a forged Origin', async () => {
    const manager = await signIn(USERS.managerA)
    const res = await manager.request('POST', '/api/users', { email: 'x@example.test', name: 'Forged', role: 'mechanic', organisationId: 2, password: 'forged-password-26' }, { origin: 'https://rival.example' })
    expect(res.status).toBe(403)
    expect(res.body.message).toMatch(/Cross-site request refused/)
  })

  it('refuses a request the browser marks as cross-site', async () => {
    const manager = await signIn(USERS.managerA)
    const res = await manager.request('POST', '/api/auth/logout', {}, { 'sec-fetch-site': 'cross-site', origin: BASE })
    expect(res.status).toBe(403)
    expect((await manager.get('/api/me')).status).toBe(200)
  })

  it('lets same-origin requests through and reads are never blocked', async () => {
    const manager = await signIn(USERS.managerA)
    expect((await manager.request('GET', '/api/board', undefined, { origin: 'https://rival.example' })).status).toBe(200)
    const same = await manager.request('POST', '/api/logger-profiles', { name: 'same-origin probe', header: ['t', 'rpm'], mapping: { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' } }, { 'sec-fetch-site': 'same-origin' })
    expect(same.status).toBe(200)
  })

  it('sets the session cookie HttpOnly and SameSite=Lax', async () => {
    const res = await fetch(`${BASE}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: BASE }, body: JSON.stringify({ email: USERS.raceA, password: 'ledger-demo-2026' }) })
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith('nuxt-session='))!
    expect(cookie).toMatch(/HttpOnly/i)
    expect(cookie).toMatch(/SameSite=Lax/i)
  })
})
