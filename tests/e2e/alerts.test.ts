// Life check and alert e-mail, end to end against the test database and real SMTP (maildev).
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
import { BASE, db, signIn, USERS, type Client } from './helpers'
import { freePort } from './servers'

const SMTP_PORT = Number(process.env.NUXT_SMTP_PORT || 1027)
const MAIL_WEB = `http://127.0.0.1:${process.env.CL_MAILDEV_WEB || 1082}`
const FROM = 'Crankledger <alerts@crankledger.local>'

const smtp = (port: number): MailTransport => nodemailer.createTransport({ host: '127.0.0.1', port, ignoreTLS: true, connectionTimeout: 3000, greetingTimeout: 3000 })
const sharedMail = smtp(SMTP_PORT)

interface Mail { subject: string; to: { address: string }[]; text: string; html: string }
const inbox = async (web = MAIL_WEB): Promise<Mail[]> => (await fetch(`${web}/api/email`)).json()
const clearInbox = async (web = MAIL_WEB) => {
  await fetch(`${web}/api/email/all`, { method: 'DELETE' })
}
const addressesOf = (mails: Mail[]) => mails.flatMap((m) => m.to.map((t) => t.address.toLowerCase())).sort()

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

/** The people an alert about this engine should reach by e-mail: supplier engineers and the running team's managers. */
async function expectedRecipients(engineId: number): Promise<string[]> {
  const e = await db()('engines').where('id', engineId).first()
  const rows = await db()('users')
    .where('active', true)
    .where((q) => q.where({ organisation_id: e.supplier_id, role: 'supplier_engineer' }).orWhere({ organisation_id: e.team_id, role: 'team_manager' }))
    .select('email')
  return rows.map((r: any) => r.email.toLowerCase()).sort()
}

async function engineBySerial(serial: string) {
  return db()('engines').where({ serial }).first()
}

/** A finding from outside the life check (as the oil feature will hand in), unique to one test. */
function extraFinding(engine: { id: number; serial: string }, tag: string, kind: Finding['kind'] = 'oil-caution'): Finding {
  return {
    key: `test:${tag}:${randomUUID()}`,
    kind,
    level: 'caution',
    engineId: engine.id,
    componentId: null,
    title: `${engine.serial} test finding ${tag}`,
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
  it('sends one mail per level (warning, due, limit) to the supplier engineers and the team managers, and none on a rerun', async () => {
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

    const levels = [
      { fraction: ct.warningLevel + 0.03, word: 'warning', status: 'warning' },
      { fraction: ct.dueLevel + 0.03, word: 'rebuild due', status: 'due' },
      { fraction: 1.03, word: 'limit reached', status: 'over' },
    ]
    const ourMails = async () => (await inbox()).filter((m) => m.subject.includes(target.serial))
    await clearInbox()
    try {
      for (const level of levels) {
        const limitHours = Math.round((target.hours / level.fraction) * 1000) / 1000
        expect((await supplier.patch(`/api/component-types/${ct.id}`, { limitHours })).status).toBe(200)
        const part = (await computeFleetLife(db(), new Date())).parts.get(target.componentId)!
        expect(part.status).toBe(level.status)
        const run = await runLifeCheck(checkDeps())
        expect(run.outcome).toBe('ok')
        expect(run.alertsCreated).toBeGreaterThanOrEqual(1)
        await deliver()
      }
      const mails = await ourMails()
      expect(mails).toHaveLength(3 * recipients.length)
      expect(addressesOf(mails)).toEqual(recipients.flatMap((r) => [r, r, r]).sort())
      for (const r of recipients) {
        const subjects = mails.filter((m) => m.to.some((t) => t.address.toLowerCase() === r)).map((m) => m.subject)
        expect(subjects.map((s) => s.match(/\((warning|rebuild due|limit reached)\)/)![1]).sort()).toEqual(['limit reached', 'rebuild due', 'warning'])
      }
      // Subject, bodies, link and caution.
      const over = mails.find((m) => m.subject.includes('(limit reached)'))!
      const label = (target.positionLabel ?? target.typeName).toLowerCase()
      expect(over.subject).toMatch(new RegExp(`^\\[Crankledger\\] KV8-1103 ${label} ${target.serial} at 103 % \\(limit reached\\) – running hours$`))
      expect(over.text).toContain(`${BASE}/engines/${engine.id}`)
      expect(over.text).toContain('Governing limit: Running hours')
      expect(over.text).toContain('Life consumed: 103 %')
      expect(over.text).toContain('never a substitute')
      expect(over.html).toContain(`href="${BASE}/engines/${engine.id}"`)
      expect(over.html).toContain('never a substitute')

      // The same findings again: nothing new, nothing sent.
      const before = (await inbox()).length
      const rerun = await runLifeCheck(checkDeps())
      expect(rerun.outcome).toBe('ok')
      expect(rerun.alertsCreated).toBe(0)
      expect(rerun.mailsQueued).toBe(0)
      expect((await deliver()).sent).toBe(0)
      expect((await inbox()).length).toBe(before)
      const alerts = await db()('alerts').where('component_id', target.componentId).where('kind', 'like', 'life-%')
      expect(alerts.map((a: any) => a.level).sort()).toEqual(['due', 'over', 'warning'])
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
      const mails = (await inbox()).filter((m) => m.subject.includes(finding.title))
      const expected = (await expectedRecipients(engine.id)).filter((r) => r !== USERS.managerA)
      expect(addressesOf(mails)).toEqual(expected)
      const listed = (await managerA.get('/api/alerts?state=all')).body
      expect(listed.some((a: any) => a.title === finding.title)).toBe(true)
    } finally {
      await managerA.put('/api/me/alert-prefs', { email: { 'oil-caution': prefsBefore.kinds.find((k: any) => k.kind === 'oil-caution').email } })
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

    const alert = await db()('alerts').where('alert_key', finding.key).first()
    const rows = async () => db()('mail_outbox').where('alert_id', alert.id).orderBy('id')
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
      const got = (await inbox(`http://127.0.0.1:${webPort}`)).filter((m) => m.subject.includes(finding.title))
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
    const alert = await db()('alerts').where('alert_key', finding.key).first()
    let clock = Date.now()
    for (let i = 0; i < 40; i++) {
      clock += 61 * 60_000 // past the longest backoff
      await deliver(down, { now: () => new Date(clock), maxAttempts: 3 })
      const left = await db()('mail_outbox').where('alert_id', alert.id).where('state', 'pending').count({ n: '*' }).first()
      if (Number(left!.n) === 0) break
    }
    const rows = await db()('mail_outbox').where('alert_id', alert.id)
    expect(rows.length).toBeGreaterThan(0)
    expect(rows.every((r: any) => r.state === 'failed' && r.attempts === 3)).toBe(true)
    const view = await admin.get('/api/admin/outbox?state=failed')
    expect(view.status).toBe(200)
    expect(view.body.counts.failed).toBeGreaterThanOrEqual(rows.length)
    expect(view.body.mails.filter((m: any) => m.alertId === Number(alert.id)).map((m: any) => m.state)).toEqual(rows.map(() => 'failed'))
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
      expect(Number((await db()('alerts').whereIn('alert_key', keys).count({ n: '*' }).first())!.n)).toBe(3)
      await Promise.all([deliver(), deliver()])
      const mails = (await inbox()).filter((m) => findings.some((f) => m.subject.includes(f.title)))
      expect(mails).toHaveLength(3 * recipients.length)
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
    const mails = (await inbox()).filter((m) => m.subject.includes(finding.title))
    const to = addressesOf(mails)
    expect(to).toContain(USERS.managerA)
    expect(to).not.toContain(USERS.managerB)
    expect(to).not.toContain(USERS.managerC)
    expect(to.every((a) => a.endsWith('@keelbrook.test') || a.endsWith('@marlowe.test'))).toBe(true)

    const alert = await db()('alerts').where('alert_key', finding.key).first()
    const listB = await managerB.get('/api/alerts?state=all&limit=500')
    expect(listB.status).toBe(200)
    const tidewater = await db()('organisations').where('name', 'Tidewater Apex Motorsport').first()
    expect(listB.body.every((a: any) => a.teamId === tidewater.id)).toBe(true)
    expect(JSON.stringify(listB.body)).not.toContain('KV8-1101')
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
