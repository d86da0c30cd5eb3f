// Life check and alert e-mail, end to end against the test database and real SMTP (maildev): alerts
// per engine and cause, a digest per recipient and run, "do not run" at once as well.
// The jobs are called directly here (the shared test server runs with alerts switched off), with
// fleet life from the same service the server uses.
import { spawn } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import MailDev from 'maildev'
import nodemailer from 'nodemailer'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { computeFleetLife } from '../../server/services/life'
import { deliverOutbox, type MailTransport } from '../../tasks/deliver-outbox'
import { LIFE_CHECK_LOCK, runLifeCheck, type Finding, type LifeCheckDeps } from '../../tasks/life-check'
import { mariadbLock, noLock } from '../../tasks/lock'
import { addressesOf, clearInbox, expectedRecipients, inbox, isDigest, isDoNotRun, to, type Mail } from './alert-helpers'
import { BASE, db, signIn, USERS, type Client } from './helpers'
import { freePort } from './servers'

const SMTP_PORT = Number(process.env.NUXT_SMTP_PORT || 1027)
const FROM = 'Crankledger <alerts@crankledger.local>'

const smtp = (port: number): MailTransport => nodemailer.createTransport({ host: '127.0.0.1', port, ignoreTLS: true, connectionTimeout: 3000, greetingTimeout: 3000 })
const sharedMail = smtp(SMTP_PORT)

function checkDeps(over: Partial<LifeCheckDeps> = {}): LifeCheckDeps {
  return {
    db: db(),
    fleetLife: (now) => computeFleetLife(db(), now),
    now: () => new Date(),
    lock: mariadbLock(db()),
    instance: 'test-runner',
    publicUrl: BASE,
    ...over,
  }
}
const deliver = (transport: MailTransport = sharedMail, over: Partial<Parameters<typeof deliverOutbox>[0]> = {}) =>
  deliverOutbox({ db: db(), transport, now: () => new Date(), from: FROM, instance: 'test-runner', ...over })

/** The alert that lists a finding. */
const alertOf = (f: Finding) => db()('alerts as a').join('alert_parts as p', 'p.alert_id', 'a.id').where('p.item_key', f.key).first('a.*')
/** The digests that carried an alert's news. */
const digestRows = (alertId: number) => db()('mail_outbox').whereIn('id', db()('alert_notices').where('alert_id', alertId).select('digest_outbox_id')).orderBy('id')

async function engineBySerial(serial: string) {
  return db()('engines').where({ serial }).first()
}

/** A finding from outside the life check (as the oil check hands in), unique to one test: its own cause, so its own alert. */
function extraFinding(engine: { id: number; serial: string }, tag: string, kind: Finding['kind'] = 'oil-caution'): Finding {
  const id = randomUUID()
  return {
    key: `test:${tag}:${id}`,
    cause: { cause: `test:${tag}:${id}`.slice(0, 80), label: `Test ${tag}` },
    kind,
    level: 'caution',
    engineId: engine.id,
    componentId: null,
    title: `${engine.serial} test finding ${tag} ${id.slice(0, 8)}`,
    details: {
      engineSerial: engine.serial,
      engineTypeCode: 'KV8',
      teamName: null,
      partSerial: null,
      partName: null,
      position: null,
      status: 'caution',
      fraction: null,
      governing: null,
      event: null,
      message: `Test finding ${tag} for ${engine.serial}.`,
    },
  }
}

let supplier: Client
let admin: Client
let managerA: Client
let managerB: Client

beforeAll(async () => {
  supplier = await signIn(USERS.supplierEngineer)
  admin = await signIn(USERS.admin)
  managerA = await signIn(USERS.managerA)
  managerB = await signIn(USERS.managerB)
  // Whatever the demo fleet already shows is alerted once here, so each test sees only its own changes.
  const base = await runLifeCheck(checkDeps())
  expect(base.outcome).toBe('ok')
  await deliver()
})

describe('life levels alert exactly once each', () => {
  it('lists a part once per level (warning, due, limit) in one digest per recipient and run, mails "limit reached" at once too, and nothing on a rerun', async () => {
    const engine = await engineBySerial('KV8-1103') // Marlowe's, no part flagged in the demo
    const life = await computeFleetLife(db(), new Date())
    const e = life.engines.find((x) => x.id === engine.id)!
    const types = await supplier.get('/api/component-types')
    // A part governed by hours whose other measures stay low, so the hours limit alone moves it.
    const target = e.parts.find((p) => {
      const ct = types.body.find((t: any) => t.id === p.componentTypeId)
      return p.status === 'ok' && ct.limitHours && p.hours > 1 && p.measures.every((m) => m.kind === 'hours' || m.fraction < 0.5)
    })!
    expect(target).toBeTruthy()
    const ct = types.body.find((t: any) => t.id === target.componentTypeId)
    const originalLimit = ct.limitHours as number
    const recipients = await expectedRecipients(engine.id)
    expect(recipients).toContain(USERS.supplierEngineer)
    expect(recipients).toContain(USERS.managerA)
    expect(recipients).not.toContain(USERS.managerB)
    const label = target.positionLabel ?? target.typeName
    const group = target.category.toLowerCase()

    const levels = [
      { fraction: ct.warningLevel + 0.03, word: 'Warning', title: 'warning', status: 'warning', urgent: false },
      { fraction: ct.dueLevel + 0.03, word: 'Rebuild due', title: 'rebuild due', status: 'due', urgent: false },
      { fraction: 1.03, word: 'Do not run', title: 'limit reached', status: 'over', urgent: true },
    ]
    const byRun: Mail[][] = []
    try {
      for (const level of levels) {
        const limitHours = Math.round((target.hours / level.fraction) * 1000) / 1000
        expect((await supplier.patch(`/api/component-types/${ct.id}`, { limitHours })).status).toBe(200)
        const part = (await computeFleetLife(db(), new Date())).parts.get(target.componentId)!
        expect(part.status).toBe(level.status)
        await clearInbox()
        const run = await runLifeCheck(checkDeps())
        expect(run.outcome).toBe('ok')
        expect(run.alertsCreated).toBeGreaterThanOrEqual(1)
        await deliver()
        const mails = await inbox()
        byRun.push(mails)
        for (const r of recipients) {
          // One digest per person and run, however many engines and parts moved.
          const digests = to(mails, r).filter(isDigest)
          expect(digests, `${level.status} ${r}`).toHaveLength(1)
          const text = digests[0]!.text
          expect(text).toContain(`KV8-1103 (Marlowe Vane Racing) – ${BASE}/engines/${engine.id}`)
          expect(text).toMatch(new RegExp(`\\[${level.word}\\] KV8-1103 ${group} – ${level.title}: `))
          expect(text).toContain(`  - ${label} ${target.serial} – ${Math.round(level.fraction * 100)} % consumed – Running hours: `)
          // "Do not run" also goes at once, one message for the engine.
          const urgent = to(mails, r).filter((m) => isDoNotRun(m) && m.subject.includes('KV8-1103'))
          expect(urgent, `${level.status} ${r}`).toHaveLength(level.urgent ? 1 : 0)
        }
      }
      const over = to(byRun[2]!, USERS.managerA).find((m) => isDoNotRun(m) && m.subject.includes('KV8-1103'))!
      expect(over.subject).toMatch(new RegExp(`^\\[Crankledger\\] DO NOT RUN: KV8-1103 ${group} – limit reached: `))
      expect(over.text).toContain(`Open the engine: ${BASE}/engines/${engine.id}`)
      expect(over.text).toContain(`${target.serial} – 103 % consumed`)
      expect(over.text).toContain('never a substitute')
      expect(over.html).toContain(`href="${BASE}/engines/${engine.id}"`)
      expect(over.html).toContain('never a substitute')
      const digest = to(byRun[2]!, USERS.managerA).find(isDigest)!
      expect(digest.html).toContain(`href="${BASE}/alerts?engine=${engine.id}"`)

      // The same findings again: nothing new, nothing sent.
      const before = (await inbox()).length
      const rerun = await runLifeCheck(checkDeps())
      expect(rerun.outcome).toBe('ok')
      expect(rerun.alertsCreated).toBe(0)
      expect(rerun.alertsUpdated).toBe(0)
      expect(rerun.mailsQueued).toBe(0)
      expect((await deliver()).sent).toBe(0)
      expect((await inbox()).length).toBe(before)
      // Each level once for the part, each in its engine's alert for the part group.
      const alerts = await db()('alerts as a').join('alert_parts as p', 'p.alert_id', 'a.id').where('p.component_id', target.componentId).where('a.kind', 'like', 'life-%').select('a.level', 'a.cause', 'a.engine_id')
      expect(alerts.map((a: any) => a.level).sort()).toEqual(['due', 'over', 'warning'])
      expect(alerts.every((a: any) => a.cause === `life:${target.category}` && a.engine_id === engine.id)).toBe(true)
    } finally {
      expect((await supplier.patch(`/api/component-types/${ct.id}`, { limitHours: originalLimit })).status).toBe(200)
    }
  })

  it('keeps a kind a user switched off out of their mail, and still shows it in the app', async () => {
    const engine = await engineBySerial('KV8-1101')
    const prefsBefore = (await managerA.get('/api/me/alert-prefs')).body
    expect(prefsBefore.receivesEmail).toBe(true)
    expect((await managerA.put('/api/me/alert-prefs', { email: { 'oil-caution': false } })).status).toBe(200)
    expect((await managerA.put('/api/me/alert-prefs', { email: { 'no-such-kind': false } })).status).toBe(400)
    try {
      const finding = extraFinding(engine, 'prefs')
      await clearInbox()
      const run = await runLifeCheck(checkDeps({ extraFindings: async () => [finding] }))
      expect(run.alertsCreated).toBe(1)
      await deliver()
      const mails = (await inbox()).filter((m) => m.text.includes(finding.title))
      const expected = (await expectedRecipients(engine.id)).filter((r) => r !== USERS.managerA)
      expect(addressesOf(mails)).toEqual(expected)
      const listed = (await managerA.get('/api/alerts?state=all')).body
      expect(listed.some((a: any) => a.title === finding.title)).toBe(true)
    } finally {
      await managerA.put('/api/me/alert-prefs', { email: { 'oil-caution': prefsBefore.kinds.find((k: any) => k.kind === 'oil-caution').email } })
    }
  })

  it('lets a person keep the digest and switch off the urgent mail at once (or the reverse)', async () => {
    const engine = await engineBySerial('KV8-1101')
    const before = (await managerA.get('/api/me/alert-prefs')).body
    expect([before.digest, before.immediate]).toEqual([true, true])
    const bad = await managerA.put('/api/me/alert-prefs', { immediate: 'no' })
    expect(bad.status).toBe(400)
    expect(bad.body.message).toContain('immediate')
    expect((await managerA.put('/api/me/alert-prefs', { immediate: false })).body).toMatchObject({ digest: true, immediate: false })
    expect((await supplier.put('/api/me/alert-prefs', { digest: false })).body).toMatchObject({ digest: false, immediate: true })
    try {
      const finding = { ...extraFinding(engine, 'urgent-prefs', 'life-over'), level: 'over' }
      await clearInbox()
      expect((await runLifeCheck(checkDeps({ extraFindings: async () => [finding] }))).alertsCreated).toBe(1)
      await deliver()
      const mails = (await inbox()).filter((m) => m.text.includes(finding.title))
      expect(to(mails, USERS.managerA).map((m) => isDigest(m))).toEqual([true])
      expect(to(mails, USERS.supplierEngineer).map((m) => isDoNotRun(m))).toEqual([true])
      // everyone else: both
      for (const r of (await expectedRecipients(engine.id)).filter((x) => x !== USERS.managerA && x !== USERS.supplierEngineer)) {
        expect(to(mails, r).map((m) => (isDigest(m) ? 'digest' : isDoNotRun(m) ? 'urgent' : m.subject)).sort(), r).toEqual(['digest', 'urgent'])
      }
    } finally {
      await managerA.put('/api/me/alert-prefs', { immediate: true })
      await supplier.put('/api/me/alert-prefs', { digest: true })
    }
  })
})

describe('delivery while the mail server is down', () => {
  it('completes the run, keeps the mails in the outbox and delivers them once when the server is back', async () => {
    const smtpPort = await freePort()
    const webPort = await freePort()
    const down = smtp(smtpPort) // nothing listens there yet
    const engine = await engineBySerial('KV8-1101')
    const finding = extraFinding(engine, 'smtp-down')
    const recipients = await expectedRecipients(engine.id)

    const run = await runLifeCheck(checkDeps({ extraFindings: async () => [finding] }))
    expect(run.outcome).toBe('ok')
    expect(run.alertsCreated).toBe(1)
    const first = await deliver(down)
    expect(first.sent).toBe(0)
    expect(first.serverDown).toBe(true)

    const alert = await alertOf(finding)
    const rows = async () => digestRows(alert.id)
    const pending = await rows()
    expect(pending).toHaveLength(recipients.length)
    expect(pending.every((r: any) => r.state === 'pending')).toBe(true)
    const tried = pending.filter((r: any) => r.attempts === 1)
    expect(tried.length).toBeGreaterThanOrEqual(1)
    expect(tried[0].last_error).toMatch(/ECONNREFUSED|ECONNECTION/)
    // Backoff: the first retry waits one minute.
    expect(new Date(tried[0].next_attempt_at).getTime() - Date.now()).toBeGreaterThan(50_000)

    const maildev = new MailDev({ smtp: smtpPort, web: webPort, ip: '127.0.0.1', webIp: '127.0.0.1', silent: true })
    await maildev.start()
    try {
      const later = () => new Date(Date.now() + 2 * 60_000)
      const back = await deliver(smtp(smtpPort), { now: later })
      expect(back.sent).toBeGreaterThanOrEqual(recipients.length)
      const again = await deliver(smtp(smtpPort), { now: () => new Date(Date.now() + 3600_000) })
      expect(again.sent).toBe(0)
      const got = (await inbox(`http://127.0.0.1:${webPort}`)).filter((m) => m.text.includes(finding.title))
      expect(addressesOf(got)).toEqual(recipients)
      expect((await rows()).every((r: any) => r.state === 'sent' && r.sent_at)).toBe(true)
    } finally {
      await maildev.stop()
    }
  })

  it('marks a mail failed after the last attempt and shows it to admins', async () => {
    const down = smtp(await freePort())
    const engine = await engineBySerial('KV8-1201')
    const finding = extraFinding(engine, 'undeliverable')
    await runLifeCheck(checkDeps({ extraFindings: async () => [finding] }))
    const alert = await alertOf(finding)
    let clock = Date.now()
    for (let i = 0; i < 40; i++) {
      clock += 61 * 60_000 // past the longest backoff
      await deliver(down, { now: () => new Date(clock), maxAttempts: 3 })
      if ((await digestRows(alert.id)).every((r: any) => r.state !== 'pending')) break
    }
    const rows = await digestRows(alert.id)
    expect(rows.length).toBeGreaterThan(0)
    expect(rows.every((r: any) => r.state === 'failed' && r.attempts === 3)).toBe(true)
    const view = await admin.get('/api/admin/outbox?state=failed')
    expect(view.status).toBe(200)
    expect(view.body.counts.failed).toBeGreaterThanOrEqual(rows.length)
    expect(view.body.mails.filter((m: any) => m.alertId === Number(alert.id)).map((m: any) => [m.kind, m.state])).toEqual(rows.map(() => ['digest', 'failed']))
    expect((await managerA.get('/api/admin/outbox')).status).toBe(403)
  })
})

describe('two runs at the same moment', () => {
  it('produces one set of alerts and mails, whether the lock or the unique key stops the second', async () => {
    const engine = await engineBySerial('KV8-1103')
    const recipients = await expectedRecipients(engine.id)
    for (const lock of [mariadbLock(db()), noLock]) {
      const findings = [extraFinding(engine, 'twin-a'), extraFinding(engine, 'twin-b'), extraFinding(engine, 'twin-c')]
      await clearInbox()
      const runs = await Promise.all([
        runLifeCheck(checkDeps({ lock, instance: 'twin-1', extraFindings: async () => findings })),
        runLifeCheck(checkDeps({ lock, instance: 'twin-2', extraFindings: async () => findings })),
      ])
      expect(runs.filter((r) => r.outcome === 'ok').length).toBeGreaterThanOrEqual(1)
      expect(runs.reduce((t, r) => t + r.alertsCreated, 0)).toBe(3)
      const keys = findings.map((f) => f.key)
      const parts = await db()('alert_parts').whereIn('item_key', keys)
      expect(parts).toHaveLength(3)
      expect(new Set(parts.map((p: any) => p.alert_id)).size).toBe(3)
      await Promise.all([deliver(), deliver()])
      const mails = (await inbox()).filter((m) => findings.some((f) => m.text.includes(f.title)))
      // Each finding reaches each person exactly once; under the lock, all three in one digest.
      for (const r of recipients) for (const f of findings) expect(to(mails, r).filter((m) => m.text.includes(f.title)), `${r} ${f.title}`).toHaveLength(1)
      if (lock !== noLock) expect(mails).toHaveLength(recipients.length)
    }
  })

  it('skips a run while another instance holds the lock', async () => {
    const release = await mariadbLock(db()).tryAcquire(LIFE_CHECK_LOCK)
    expect(release).not.toBeNull()
    try {
      const run = await runLifeCheck(checkDeps())
      expect(run.outcome).toBe('skipped')
      const row = await db()('task_runs').where('id', run.runId).first()
      expect(row.outcome).toBe('skipped')
    } finally {
      await release!()
    }
    expect((await runLifeCheck(checkDeps())).outcome).toBe('ok')
  })
})

describe('alerts stay inside the team', () => {
  it('never mails or shows team B an alert about team A\'s engine', async () => {
    const engine = await engineBySerial('KV8-1101') // Marlowe (team A)
    const finding = extraFinding(engine, 'scope')
    await clearInbox()
    await runLifeCheck(checkDeps({ extraFindings: async () => [finding] }))
    await deliver()
    const mails = (await inbox()).filter((m) => m.text.includes(finding.title))
    const sentTo = addressesOf(mails)
    expect(sentTo).toContain(USERS.managerA)
    expect(sentTo).not.toContain(USERS.managerB)
    expect(sentTo).not.toContain(USERS.managerC)
    expect(sentTo.every((a) => a.endsWith('@keelbrook.test') || a.endsWith('@marlowe.test'))).toBe(true)

    const alert = await alertOf(finding)
    const listB = await managerB.get('/api/alerts?state=all&limit=500')
    expect(listB.status).toBe(200)
    const tidewater = await db()('organisations').where('name', 'Tidewater Apex Motorsport').first()
    expect(listB.body.every((a: any) => a.teamId === tidewater.id)).toBe(true)
    expect(JSON.stringify(listB.body)).not.toContain('KV8-1101')
    const groupsB = await managerB.get(`/api/alerts/engines?state=all&engineId=${engine.id}`)
    expect(groupsB.status).toBe(200)
    expect(groupsB.body).toEqual([])
    expect((await managerB.get('/api/alerts/engines?state=all&limit=500')).body.every((g: any) => g.alerts.every((a: any) => a.teamId === tidewater.id))).toBe(true)
    expect((await managerB.post(`/api/alerts/engines/${engine.id}/ack`, { comment: 'not mine' })).status).toBe(404)
    expect((await managerB.post(`/api/alerts/${alert.id}/ack`, { comment: 'not mine' })).status).toBe(404)
    expect(await db()('alert_acks').where('alert_id', alert.id).first()).toBeUndefined()

    const listA = await managerA.get('/api/alerts?state=open&limit=500')
    expect(listA.body.some((a: any) => a.id === Number(alert.id))).toBe(true)
    const ack = await managerA.post(`/api/alerts/${alert.id}/ack`, { comment: 'Checked with the supplier' })
    expect(ack.status).toBe(200)
    expect(ack.body.acknowledged).toBe(true)
    expect(ack.body.acks[0].comment).toBe('Checked with the supplier')
    expect((await managerA.post(`/api/alerts/${alert.id}/ack`, {})).status).toBe(409)
    expect((await managerA.post(`/api/alerts/${alert.id}/ack`, { comment: 'x'.repeat(1001) })).status).toBe(400)
    expect((await managerA.get('/api/alerts?state=open&limit=500')).body.some((a: any) => a.id === Number(alert.id))).toBe(false)
    // The supplier sees every team's alerts.
    const all = (await supplier.get('/api/alerts?state=all&limit=500')).body
    expect(all.some((a: any) => a.id === Number(alert.id))).toBe(true)
  })
})

describe('admin', () => {
  it('runs the check on request and lists the runs; other roles are refused', async () => {
    expect((await managerA.post('/api/admin/life-check')).status).toBe(403)
    const res = await admin.post('/api/admin/life-check')
    expect(res.status).toBe(200)
    expect(res.body.check.outcome).toBe('ok')
    const runs = await admin.get('/api/admin/task-runs')
    expect(runs.status).toBe(200)
    expect(runs.body[0].id).toBe(res.body.check.runId)
    expect(runs.body[0].findings).toBeGreaterThan(0)
    expect((await managerA.get('/api/admin/task-runs')).status).toBe(403)
  })
})

describe('schedule', () => {
  it('stops the built server at start with a clear message when the schedule is not a cron expression', async () => {
    const port = await freePort()
    const child = spawn(process.execPath, ['.output/server/index.mjs'], {
      env: { ...process.env, PORT: String(port), NITRO_HOST: '127.0.0.1', NUXT_ALERT_SCHEDULE: 'not a cron', NUXT_ALERTS_ENABLED: 'true' },
      stdio: ['ignore', 'pipe', 'pipe'],
    })
    let output = ''
    child.stdout.on('data', (d) => (output += d))
    child.stderr.on('data', (d) => (output += d))
    const code = await new Promise<number | null>((resolve) => {
      const timer = setTimeout(() => {
        child.kill('SIGKILL')
        resolve(null)
      }, 30_000)
      child.once('exit', (c) => {
        clearTimeout(timer)
        resolve(c)
      })
    })
    expect(code).not.toBe(0)
    expect(code).not.toBeNull()
    expect(output).toContain('"not a cron" is not a valid cron expression')
  })
})

afterAll(async () => {
  sharedMail && (sharedMail as any).close?.()
})
