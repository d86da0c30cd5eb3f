// The whole cluster stopped and started again under running instances: every committed session,
// teardown and alert is still there, and the instances answer again by themselves.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { APP_PORTS, count, galera, importFile, loggerCsv, onNode, sha256, signIn, startApp, startStore, waitFor, type App, type Store } from './cluster'

let store: Store
let a: App
let b: App

beforeAll(async () => {
  store = await startStore()
  ;[a, b] = await Promise.all([startApp(APP_PORTS[0]), startApp(APP_PORTS[1])])
})

afterAll(async () => {
  await Promise.all([a?.stop(), b?.stop()])
  await store?.stop()
  galera('start')
})

const TABLES = ['sessions', 'teardowns', 'alerts', 'audit_log'] as const

describe('the whole cluster restarted', () => {
  it('keeps every committed session, teardown and alert', async () => {
    const cookie = await signIn(a.base, 'manager@marlowe.test')
    const engine = await onNode(1, (db) => db('engines').where('serial', 'KT4-2201').first('id'))
    const file = loggerCsv(401)
    expect((await importFile(a.base, cookie, engine.id, file, 'before-restart.csv')).status).toBe(201)

    const before: Record<string, number> = {}
    for (const t of TABLES) before[t] = await count(1, t)
    expect(before.sessions).toBeGreaterThan(0)
    expect(before.teardowns).toBeGreaterThan(0)

    galera('stop')
    // A kept-alive socket may have been closed by the instance meanwhile: ask again on a fresh one.
    let away: Response | undefined
    expect(await waitFor(async () => (away = await fetch(`${b.base}/api/board`, { headers: { cookie } })).status === 503, 10_000)).toBe(true)
    expect(away!.headers.get('retry-after')).toMatch(/^\d+$/)
    expect(((await away!.json()) as { message: string }).message).toMatch(/database/i)
    galera('start')

    for (const app of [a, b]) {
      expect(await waitFor(async () => (await fetch(`${app.base}/api/board`, { headers: { cookie } })).status === 200, 30_000)).toBe(true)
    }
    for (const node of [1, 2, 3] as const) {
      for (const t of TABLES) expect(await count(node, t), `${t} on node ${node}`).toBe(before[t])
    }
    expect(await count(2, 'sessions', { file_sha256: sha256(file) })).toBe(1)
    // The sign-in made before the restart still holds, on either instance.
    expect((await fetch(`${b.base}/api/me`, { headers: { cookie } })).status).toBe(200)
  })
})
