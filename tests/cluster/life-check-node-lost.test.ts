// The writer node killed while the scheduled life check runs on two instances, and restarted:
// every finding gets its alert and every alert's mail goes out exactly once (maildev), none lost.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { APP_PORTS, count, galera, MAILDEV_WEB, onNode, signIn, startApp, startStore, waitFor, type App, type Store } from './cluster'

let store: Store
let a: App
let b: App
const MAILDEV = `http://127.0.0.1:${MAILDEV_WEB}`
// Both instances check every 2 s (six-field cron), so runs overlap and contend for the lock.
const ALERTS = { NUXT_ALERTS_ENABLED: 'true', NUXT_ALERT_SCHEDULE: '*/2 * * * * *' }

interface Mail { to: { address: string }[]; subject: string }

beforeAll(async () => {
  store = await startStore()
  await fetch(`${MAILDEV}/api/email/all`, { method: 'DELETE' })
})

afterAll(async () => {
  await Promise.all([a?.stop(), b?.stop()])
  await store?.stop()
  galera('start')
})

describe('a Galera node lost during the scheduled life check', () => {
  it('alerts each finding once and mails each alert once, none lost', async () => {
    const alertsBefore = await count(2, 'alerts')
    const mailsBefore = await count(2, 'mail_outbox')
    const startedAt = new Date(Date.now() - 1000)
    ;[a, b] = await Promise.all([startApp(APP_PORTS[0], ALERTS), startApp(APP_PORTS[1], ALERTS)])

    // The moment a check is running (seen on node 2, where node 1's writes replicate), node 1 goes.
    const running = await waitFor(async () => (await onNode(2, (db) => db('task_runs').where({ task: 'life-check', outcome: 'running' }).where('started_at', '>=', startedAt).first('id'))) !== undefined, 60_000, 20)
    expect(running).toBe(true)
    galera('kill', 1)
    await new Promise((r) => setTimeout(r, 3_000))
    galera('start', 1)

    // Settled: a check has finished after the restart, no mail waits, nothing failed.
    const restartedAt = new Date()
    const settled = await waitFor(async () => {
      const ok = await onNode(1, (db) => db('task_runs').where({ task: 'life-check', outcome: 'ok' }).where('started_at', '>=', restartedAt).first('id'))
      const waiting = await count(1, 'mail_outbox', { state: 'pending' })
      return ok !== undefined && waiting === 0
    }, 90_000, 500)
    expect(settled).toBe(true)
    expect(await count(1, 'mail_outbox', { state: 'failed' })).toBe(0)

    const alertsCreated = (await count(1, 'alerts')) - alertsBefore
    const outbox = await onNode(1, (db) => db('mail_outbox').orderBy('id').offset(mailsBefore).limit(10_000).select('to_address', 'subject', 'state'))
    expect(alertsCreated).toBeGreaterThan(0)
    expect(outbox.length).toBeGreaterThan(0)
    expect(outbox.every((m) => m.state === 'sent')).toBe(true)

    // Nothing lost: an admin's check now finds every finding already alerted and queues nothing.
    // The scheduled checks stop first (one instance back with the schedule off), so the admin's
    // run is not the one that finds the lock taken.
    await Promise.all([a.stop(), b.stop()])
    b = await startApp(APP_PORTS[1])
    const admin = await signIn(b.base, 'admin@keelbrook.test')
    const rerun = await fetch(`${b.base}/api/admin/life-check`, { method: 'POST', headers: { cookie: admin, origin: b.base } })
    expect(rerun.status).toBe(200)
    const result = (await rerun.json()) as { check: { outcome: string; alertsCreated: number; mailsQueued: number } }
    expect(result.check.outcome).toBe('ok')
    expect(result.check.alertsCreated).toBe(0)
    expect(result.check.mailsQueued).toBe(0)

    // Exactly once: one mail in the inbox per queued mail, none twice.
    const inbox = (await (await fetch(`${MAILDEV}/api/email`)).json()) as Mail[]
    const sent = inbox.map((m) => `${m.to.map((t) => t.address.toLowerCase()).join(',')} | ${m.subject}`).sort()
    const queued = outbox.map((m) => `${String(m.to_address).toLowerCase()} | ${m.subject}`).sort()
    expect(new Set(sent).size).toBe(sent.length)
    expect(sent).toEqual(queued)
    // One alert per key, on every node.
    for (const node of [1, 2, 3] as const) {
      expect(await count(node, 'alerts')).toBe(alertsBefore + alertsCreated)
    }
  })
})
