// Graceful shutdown: a second server on the test database receives SIGTERM while an import is
// still arriving; the import is finished and stored, new connections are refused, and the process
// exits by itself (no forced exit), which it can only do once the pool is closed.
import { spawn } from 'node:child_process'
import { describe, expect, it } from 'vitest'
import { db, DEMO_PASSWORD } from './helpers'
import { freePort } from './servers'

describe('graceful shutdown', () => {
  it('finishes the request in flight, refuses new ones, closes the pool and exits cleanly', async () => {
    const PORT = String(await freePort())
    const BASE = `http://127.0.0.1:${PORT}`
    const server = spawn(process.execPath, ['.output/server/index.mjs'], {
      env: { ...process.env, PORT, NITRO_HOST: '127.0.0.1', NUXT_PUBLIC_URL: BASE, NUXT_ALERTS_ENABLED: 'false', NITRO_SHUTDOWN_NO_FORCE_EXIT: 'true', NITRO_SHUTDOWN_TIMEOUT: '20000' },
      stdio: 'ignore',
    })
    const exited = new Promise<number | null>((r) => server.once('exit', (code) => r(code)))
    for (let i = 0; i < 120; i++) {
      try {
        if ((await fetch(`${BASE}/api/health`)).ok) break
      } catch {}
      await new Promise((r) => setTimeout(r, 250))
    }
    const login = await fetch(`${BASE}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: BASE }, body: JSON.stringify({ email: 'race@redfern.test', password: DEMO_PASSWORD }) })
    const cookie = login.headers.getSetCookie()[0]!.split(';')[0]!
    const engine = await db()('engines').where('serial', 'KT4-2102').first()
    const before = Number((await db()('sessions').where('engine_id', engine.id).count({ n: '*' }).first())!.n)

    // A file that takes about two seconds to arrive; SIGTERM comes half way.
    const lines = ['time_s,engine_rpm']
    for (let i = 0; i < 4000; i++) lines.push(`${(i / 100).toFixed(2)},${5250 + (i % 7)}`)
    const body = Buffer.from(lines.join('\n'))
    const parts = 20
    let sent = 0
    const stream = new ReadableStream({
      async pull(controller) {
        if (sent >= parts) return controller.close()
        if (sent === parts / 2) server.kill('SIGTERM')
        await new Promise((r) => setTimeout(r, 100))
        controller.enqueue(body.subarray((sent * body.length) / parts, ((sent + 1) * body.length) / parts))
        sent++
      },
    })
    const q = new URLSearchParams({ engineId: String(engine.id), kind: 'test', startedAt: new Date().toISOString(), mapping: JSON.stringify({ columns: { time: 'time_s', rpm: 'engine_rpm' }, units: {}, decimal: '.' }) })
    const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers: { cookie, origin: BASE, 'content-type': 'text/csv' }, body: stream, duplex: 'half' } as RequestInit)
    expect(res.status).toBe(201)
    await expect(fetch(`${BASE}/api/health`)).rejects.toThrow()
    const code = await Promise.race([exited, new Promise((r) => setTimeout(() => r('still running'), 25_000))])
    expect(code).toBe(0)
    const after = Number((await db()('sessions').where('engine_id', engine.id).count({ n: '*' }).first())!.n)
    expect(after).toBe(before + 1)
  }, 60_000)
})
