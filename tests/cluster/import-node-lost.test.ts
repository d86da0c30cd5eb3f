// The writer node killed (SIGKILL) in the middle of a logger import: the import is stored whole or
// answered with an error that leaves neither a session nor a stored file; after the instances have
// moved to the next node, a retry of the same file is stored once, and the other instance reads it.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { APP_PORTS, count, galera, importFile, loggerCsv, onNode, sha256, signIn, startApp, startStore, storedObjects, waitFor, type App, type Store } from './cluster'

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
  galera('start') // node 1 back for the next file
})

describe('a Galera node lost during a logger import', () => {
  it('stores the import whole or not at all, and a retry after failover stores it once', async () => {
    const cookieA = await signIn(a.base, 'race@redfern.test')
    const cookieB = await signIn(b.base, 'race@redfern.test')
    const engineId = (await onNode(2, (db) => db('engines').where('serial', 'KT4-2103').first('id'))).id as number
    const file = loggerCsv(101, 40_000)
    const digest = sha256(file)
    const sessionsBefore = await count(2, 'sessions')
    const objectsBefore = storedObjects('logger').length

    // The file trickles in; node 1, the writer of both instances, is killed a third of the way in.
    let sent = 0
    let killed = false
    const stream = new ReadableStream({
      async pull(controller) {
        if (sent >= file.length) return controller.close()
        if (!killed && sent > file.length / 3) {
          galera('kill', 1)
          killed = true
        }
        await new Promise((r) => setTimeout(r, 10))
        const chunk = file.subarray(sent, sent + 16_384)
        sent += chunk.length
        controller.enqueue(chunk)
      },
    })
    const first = await importFile(a.base, cookieA, engineId, stream, 'node-lost.csv')
    expect(killed).toBe(true)
    expect([201, 503]).toContain(first.status)
    if (first.status === 503) {
      expect(first.retryAfter).toMatch(/^\d+$/)
      expect(first.body.message).toMatch(/database/i)
      expect(JSON.stringify(first.body)).not.toMatch(/\.mjs:\d+|ECONNREFUSED|PROTOCOL/)
    }

    // Nodes 2 and 3 carry on; the survivors agree on what was committed.
    const stored = await count(2, 'sessions', { file_sha256: digest })
    expect(await count(3, 'sessions', { file_sha256: digest })).toBe(stored)
    expect(stored).toBe(first.status === 201 ? 1 : 0)
    expect(await count(2, 'sessions')).toBe(sessionsBefore + stored)
    expect(storedObjects('logger').length).toBe(objectsBefore + stored)

    // Both instances find the new writer by themselves.
    for (const app of [a, b]) {
      expect(await waitFor(async () => (await fetch(`${app.base}/api/me`, { headers: { cookie: app === a ? cookieA : cookieB } })).status === 200, 30_000)).toBe(true)
    }

    // The same file again, through the other instance: stored once in all.
    const retry = await importFile(b.base, cookieB, engineId, file, 'node-lost.csv')
    expect(retry.status).toBe(first.status === 201 ? 409 : 201)
    expect(await count(2, 'sessions', { file_sha256: digest })).toBe(1)
    expect(await count(3, 'sessions', { file_sha256: digest })).toBe(1)
    expect(storedObjects('logger').length).toBe(objectsBefore + 1)
    const session = await onNode(2, (db) => db('sessions').where('file_sha256', digest).first('id', 'file_key'))
    expect(session.file_key).toMatch(/^logger:/)

    // The raw file one instance stored is read back by the other (the session read again from it).
    const reader = first.status === 201 ? b : a
    const res = await fetch(`${reader.base}/api/sessions/${session.id}/reprocess`, { method: 'POST', headers: { cookie: reader === a ? cookieA : cookieB, origin: reader.base } })
    expect(res.status).toBe(200)
  })

  it('leaves every concurrent import whole or absent when the writer is killed under them', async () => {
    galera('start', 1)
    const cookie = await signIn(a.base, 'manager@redfern.test')
    const engineId = (await onNode(2, (db) => db('engines').where('serial', 'KT4-2101').first('id'))).id as number
    // The instances are on node 2 now (they never move back by themselves); killed, they move on to
    // the first node in their list that is synced again, so the counts are read on node 3.
    const files = Array.from({ length: 12 }, (_, i) => loggerCsv(200 + i, 3_000))
    const objectsBefore = storedObjects('logger').length
    const answers = files.map(async (file, i) => {
      await new Promise((r) => setTimeout(r, i * 40))
      return importFile(i % 2 ? b.base : a.base, cookie, engineId, file, `burst-${i}.csv`)
    })
    await new Promise((r) => setTimeout(r, 200))
    galera('kill', 2)
    const results = await Promise.all(answers)
    for (const r of results) expect([201, 503]).toContain(r.status)

    for (const [i, file] of files.entries()) {
      const n = await count(3, 'sessions', { file_sha256: sha256(file) })
      expect(n, `file ${i}`).toBe(results[i]!.status === 201 ? 1 : 0)
    }
    const committed = results.filter((r) => r.status === 201).length
    expect(storedObjects('logger').length).toBe(objectsBefore + committed)

    // Every refused file, sent again once the instances are on node 3, is stored once.
    expect(await waitFor(async () => (await fetch(`${a.base}/api/me`, { headers: { cookie } })).status === 200, 30_000)).toBe(true)
    expect(await waitFor(async () => (await fetch(`${b.base}/api/me`, { headers: { cookie } })).status === 200, 30_000)).toBe(true)
    for (const [i, file] of files.entries()) {
      if (results[i]!.status === 201) continue
      expect((await importFile(a.base, cookie, engineId, file, `burst-${i}.csv`)).status, `file ${i}`).toBe(201)
    }
    for (const file of files) expect(await count(3, 'sessions', { file_sha256: sha256(file) })).toBe(1)
    expect(storedObjects('logger').length).toBe(objectsBefore + files.length)
  })
})
