import { describe, expect, it } from 'vitest'
import { BASE, db, signIn, USERS } from './helpers'

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

describe('the framework is not named', () => {
  it('sends no x-powered-by on pages, payloads, API answers or errors', async () => {
    for (const path of ['/login', '/', '/no-such-page', '/api/health', '/api/me', '/api/nowhere']) {
      const res = await fetch(`${BASE}${path}`)
      expect(res.headers.get('x-powered-by'), path).toBeNull()
    }
  })
})

describe('forwarded headers without a trusted proxy (the default)', () => {
  it('does not believe X-Forwarded-Host in the cross-site check', async () => {
    const manager = await signIn(USERS.managerA)
    const res = await manager.request('POST', '/api/logger-profiles', { name: 'forged host probe', header: ['t', 'rpm'], mapping: { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' } }, { origin: 'https://rival.example', 'x-forwarded-host': 'rival.example' })
    expect(res.status).toBe(403)
    expect(res.body.message).toMatch(/Cross-site request refused/)
  })

  it('counts sign-in failures against the connection\'s address, whatever X-Forwarded-For says', async () => {
    const spoof = `198.51.100.${Math.floor(Math.random() * 200) + 1}`
    const res = await fetch(`${BASE}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: BASE, 'x-forwarded-for': spoof }, body: JSON.stringify({ email: 'nobody-xff@example.test', password: 'whatever-it-is' }) })
    expect(res.status).toBe(401)
    expect(await db()('sign_in_throttle').where('throttle_key', `address:${spoof}`).first()).toBeUndefined()
    expect(await db()('sign_in_throttle').where('throttle_key', 'address:127.0.0.1').first()).toBeTruthy()
    await db()('sign_in_throttle').where('throttle_key', 'account:nobody-xff@example.test').delete()
  })
})

describe('control characters in text fields', () => {
  it('refuses NUL in a name with 400 naming the field, and writes nothing', async () => {
    const admin = await signIn(USERS.admin)
    const before = Number((await db()('users').count({ n: '*' }).first())!.n)
    const res = await admin.post('/api/users', { email: 'nul-probe@example.test', name: 'Null\u0000Byte', role: 'mechanic', organisationId: 2, password: 'nul-probe-password-26' })
    expect(res.status).toBe(400)
    expect(res.body.message).toBe('Invalid input: name: must be one line of text without control characters')
    expect(res.body.data.issues[0].path).toBe('name')
    expect(Number((await db()('users').count({ n: '*' }).first())!.n)).toBe(before)
  })

  it('refuses other C0 controls and line breaks in one-line fields, naming each', async () => {
    const manager = await signIn(USERS.managerA)
    const mapping = { columns: { time: 't', rpm: 'rpm' }, units: {}, decimal: '.' }
    for (const bad of ['bell\u0007', 'escape\u001b[31m', 'two\nlines', 'carriage\rreturn', 'delete\u007f', 'c1\u0085']) {
      const res = await manager.post('/api/logger-profiles', { name: bad, header: ['t', 'rpm'], mapping })
      expect(res.status, JSON.stringify(bad)).toBe(400)
      expect(res.body.message, JSON.stringify(bad)).toMatch(/^Invalid input: name: must be one line of text without control characters/)
    }
    // in a nested field and a list item too
    const nested = await manager.post('/api/logger-profiles', { name: 'nested probe', header: ['t', 'rpm\u0000'], mapping })
    expect(nested.status).toBe(400)
    expect(nested.body.message).toContain('header.1:')
    const column = await manager.post('/api/logger-profiles', { name: 'column probe', header: ['t', 'rpm'], mapping: { ...mapping, columns: { time: 't\u0000', rpm: 'rpm' } } })
    expect(column.status).toBe(400)
    expect(column.body.message).toContain('mapping.columns.time:')
    // a tab is text
    const tab = await manager.post('/api/logger-profiles', { name: 'tab\tprobe', header: ['t', 'rpm'], mapping })
    expect(tab.status).toBe(200)
  })

  it('keeps line breaks in multi-line fields (a comment) but not NUL', async () => {
    // the body is checked before the alert is looked up: 400 for the comment, else 404 for no such alert
    const manager = await signIn(USERS.managerA)
    const nul = await manager.post('/api/alerts/999999/ack', { comment: 'seen\u0000' })
    expect(nul.status).toBe(400)
    expect(nul.body.message).toBe('Invalid input: comment: must be text without control characters')
    const lines = await manager.post('/api/alerts/999999/ack', { comment: 'seen at the track,\r\nreplaced on Monday' })
    expect(lines.status).toBe(404)
  })

  it('refuses control characters in a query string field', async () => {
    const manager = await signIn(USERS.managerA)
    const res = await manager.get('/api/board?q=KV8%00')
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/^Invalid input: q:/)
  })
})
