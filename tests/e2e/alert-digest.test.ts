// One logger import with three over-revs on one engine, end to end against the test database and
// real SMTP (maildev): one alert per engine and cause listing its parts, one digest per recipient,
// "do not run" at once as well, and acknowledge-all for that engine alone, audited.
// The engine is made for this file and removed after it (alert-helpers.ts).
import { randomUUID } from 'node:crypto'
import nodemailer from 'nodemailer'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { computeFleetLife } from '../../server/services/life'
import { deliverOutbox } from '../../tasks/deliver-outbox'
import { runLifeCheck, type Finding, type LifeCheckDeps } from '../../tasks/life-check'
import { mariadbLock } from '../../tasks/lock'
import { clearInbox, expectedRecipients, importTrace, inbox, isDigest, isDoNotRun, makeAlertEngine, removeAlertEngine, threeOverRevs, to } from './alert-helpers'
import { BASE, db, signIn, USERS, type Client } from './helpers'

const SERIAL = 'KV8-7731'
const transport = nodemailer.createTransport({ host: '127.0.0.1', port: Number(process.env.NUXT_SMTP_PORT || 1027), ignoreTLS: true })
const checkDeps = (over: Partial<LifeCheckDeps> = {}): LifeCheckDeps => ({
  db: db(), fleetLife: (now) => computeFleetLife(db(), now), now: () => new Date(), lock: mariadbLock(db()), instance: 'digest-test', publicUrl: BASE, ...over,
})
const deliver = () => deliverOutbox({ db: db(), transport, now: () => new Date(), from: 'Crankledger <alerts@crankledger.local>', instance: 'digest-test' })

let engineId: number
let supplier: Client
let managerA: Client
let managerB: Client

beforeAll(async () => {
  supplier = await signIn(USERS.supplierEngineer)
  managerA = await signIn(USERS.managerA)
  managerB = await signIn(USERS.managerB)
  // Whatever the fleet already shows is alerted here, so the runs below see only this file's engine.
  expect((await runLifeCheck(checkDeps())).outcome).toBe('ok')
  await deliver()
  engineId = await makeAlertEngine(SERIAL)
})

afterAll(async () => {
  await removeAlertEngine(engineId)
  transport.close()
})

describe('three over-revs in one import', () => {
  it('make one alert per engine and cause, one digest per recipient, and "do not run" at once as well', async () => {
    const rods: string[] = (await db()('installations as i').join('components as c', 'c.id', 'i.component_id').where('i.engine_id', engineId).where('i.position', 'like', 'rod-%').pluck('c.serial')).sort()
    expect(rods).toHaveLength(8) // the demo V8 has eight conrods
    const crank = `${SERIAL}-CRANK`
    const springs = `${SERIAL}-SPRINGS`
    expect(Number((await db()('components').whereIn('serial', [crank, springs]).count({ n: '*' }).first())!.n)).toBe(2)

    const imported = await importTrace(supplier, engineId, threeOverRevs(), 'three-over-revs.csv')
    expect(imported.status, JSON.stringify(imported.body)).toBe(201)
    const session = (await supplier.get(`/api/sessions/${imported.body.session.id}`)).body.session
    expect(session.overRevs.map((e: any) => e.bandId)).toEqual(['C', 'C', 'C'])

    await clearInbox()
    const run = await runLifeCheck(checkDeps())
    expect(run.outcome).toBe('ok')
    // Demo limits in band C: conrod 1 event (and inspect at once), crankshaft 2, valve springs 1 (and inspect at once).
    // Three events put nine crank drive parts and the springs over their limit, and nine parts up for inspection:
    // eighteen part findings, three alerts.
    expect(run.alertsCreated).toBe(3)
    const alerts = await db()('alerts').where('engine_id', engineId).orderBy('id')
    const partsOf = async (alertId: number) => (await db()('alert_parts as p').join('components as c', 'c.id', 'p.component_id').where('p.alert_id', alertId).pluck('c.serial')).sort()
    const shape = await Promise.all(alerts.map(async (a: any) => [a.cause, a.level, await partsOf(a.id)]))
    expect(shape).toEqual(expect.arrayContaining([
      ['life:Crank drive', 'over', [...rods, crank].sort()],
      ['over-rev', 'inspection', [...rods, springs].sort()],
      ['life:Valve train', 'over', [springs]],
    ]))
    expect(shape).toHaveLength(3)

    // The page's answer: one engine, its alerts most severe first.
    const grouped = (await managerA.get(`/api/alerts/engines?engineId=${engineId}`)).body
    expect(grouped).toHaveLength(1)
    expect(grouped[0].engineSerial).toBe(SERIAL)
    expect(grouped[0].open).toBe(3)
    expect(grouped[0].worstLevel).toBe('over')
    expect(grouped[0].alerts.map((a: any) => a.level)).toEqual(['over', 'over', 'inspection'])
    expect(grouped[0].alerts.find((a: any) => a.cause === 'over-rev').parts).toHaveLength(9)

    await deliver()
    const recipients = await expectedRecipients(engineId)
    expect(recipients).toEqual(expect.arrayContaining([USERS.supplierEngineer, USERS.managerA]))
    const ours = (await inbox()).filter((m) => m.text.includes(SERIAL))
    for (const r of recipients) {
      const mine = to(ours, r)
      const digests = mine.filter(isDigest)
      expect(digests, r).toHaveLength(1)
      expect(digests[0]!.subject).toBe(`[Crankledger] Alert digest: 3 alerts on ${SERIAL}`)
      for (const a of alerts) expect(digests[0]!.text).toContain(a.title)
      expect(digests[0]!.text).toContain(`Open: ${BASE}/alerts?engine=${engineId}`)
      expect(digests[0]!.text).toContain(`${crank} – 150 % consumed – Over-rev events, Teardown (+7.6 %): 3 of 2 events`)
      const urgent = mine.filter(isDoNotRun)
      expect(urgent, r).toHaveLength(1)
      expect(urgent[0]!.subject).toMatch(new RegExp(`^\\[Crankledger\\] DO NOT RUN: ${SERIAL} .* \\(\\+2 more\\)$`))
      expect(urgent[0]!.text).toContain('Inspect now')
      expect(urgent[0]!.text).toContain('never a substitute')
      expect(mine).toHaveLength(2) // where one mail per part and finding made eighteen
    }
    expect(ours).toHaveLength(2 * recipients.length)

    // The same findings again: nothing new, nothing sent.
    const rerun = await runLifeCheck(checkDeps())
    expect([rerun.alertsCreated, rerun.alertsUpdated, rerun.mailsQueued]).toEqual([0, 0, 0])
    expect((await deliver()).sent).toBe(0)
  })

  it('adds a later finding of the same cause to the open alert and mails it as a change, not as a new alert', async () => {
    const alert = await db()('alerts').where({ engine_id: engineId, cause: 'over-rev' }).first()
    const part = await db()('installations').where({ engine_id: engineId, position: 'crank' }).first()
    const finding: Finding = {
      key: `test:late:${randomUUID()}`, kind: 'over-rev', level: 'inspection', engineId, componentId: part.component_id, title: 'late',
      details: { engineSerial: SERIAL, engineTypeCode: 'KV8', teamName: null, partSerial: `${SERIAL}-CRANK`, partName: 'Crankshaft', position: 'Crankshaft', status: 'immediate inspection', fraction: null, governing: null, event: null, message: 'late' },
    }
    await clearInbox()
    const run = await runLifeCheck(checkDeps({ extraFindings: async () => [finding] }))
    expect([run.alertsCreated, run.alertsUpdated]).toEqual([0, 1])
    expect(Number((await db()('alert_parts').where('alert_id', alert.id).count({ n: '*' }).first())!.n)).toBe(10)
    expect((await db()('alerts').where('id', alert.id).first()).title).toBe(`${SERIAL} over-rev – immediate inspection of 10 parts`)
    await deliver()
    const mine = to((await inbox()).filter((m) => m.text.includes(SERIAL)), USERS.managerA)
    expect(mine.filter(isDigest)).toHaveLength(1)
    expect(mine.filter(isDigest)[0]!.text).toContain(`${SERIAL} over-rev – immediate inspection of 10 parts (1 more part)`)
  })
})

describe('acknowledge-all per engine', () => {
  it('acknowledges exactly that engine\'s open alerts, leaves every other alert alone, and is audited', async () => {
    const ours: number[] = (await db()('alerts').where('engine_id', engineId).orderBy('id').pluck('id')).map(Number)
    expect(ours).toHaveLength(3)
    const othersAcked = async () => Number((await db()('alert_acks as k').join('alerts as a', 'a.id', 'k.alert_id').whereNot('a.engine_id', engineId).count({ n: '*' }).first())!.n)
    const otherBefore = await othersAcked()
    const auditCount = async () => Number((await db()('audit_log').count({ n: '*' }).first())!.n)

    // Another team: as if the engine did not exist; nothing written.
    const auditBefore = await auditCount()
    expect((await managerB.post(`/api/alerts/engines/${engineId}/ack`, { comment: 'not ours' })).status).toBe(404)
    expect((await managerB.post('/api/alerts/engines/999999/ack', {})).status).toBe(404)
    expect(await auditCount()).toBe(auditBefore)
    const long = await managerA.post(`/api/alerts/engines/${engineId}/ack`, { comment: 'x'.repeat(1001) })
    expect(long.status).toBe(400)
    expect(long.body.message).toContain('comment')
    expect((await managerA.post('/api/alerts/engines/abc/ack', {})).status).toBe(400)

    // An alert that arrives after the page was read is not acknowledged unseen.
    const throughId = Math.max(...ours)
    const late: Finding = {
      key: `test:after-read:${randomUUID()}`, kind: 'oil-caution', level: 'caution', engineId, componentId: null, title: `${SERIAL} oil caution (test)`,
      details: { engineSerial: SERIAL, engineTypeCode: 'KV8', teamName: null, partSerial: null, partName: null, position: null, status: 'caution', fraction: null, governing: null, event: null, message: 'Test.' },
    }
    expect((await runLifeCheck(checkDeps({ extraFindings: async () => [late] }))).alertsCreated).toBe(1)
    const lateId = Number((await db()('alert_parts').where('item_key', late.key).first()).alert_id)

    const res = await managerA.post(`/api/alerts/engines/${engineId}/ack`, { comment: 'Engine quarantined for teardown', throughId })
    expect(res.status).toBe(200)
    expect(res.body).toEqual({ engineId, acknowledged: 3, alertIds: ours })
    const acks = await db()('alert_acks').whereIn('alert_id', [...ours, lateId]).orderBy('alert_id')
    const manager = await db()('users').where('email', USERS.managerA).first()
    expect(acks.map((k: any) => [Number(k.alert_id), k.user_id, k.comment])).toEqual(ours.map((id) => [id, manager.id, 'Engine quarantined for teardown']))
    expect(await othersAcked()).toBe(otherBefore)

    const audit = (await supplier.get('/api/audit?entity=engine&action=acknowledge-alerts')).body.items[0]
    expect(audit.entityId).toBe(String(engineId))
    expect(audit.userName).toBe(manager.name)
    expect(audit.after).toEqual({ alertIds: ours, comment: 'Engine quarantined for teardown' })

    // Open on the page: only the late one; acknowledging again takes it and nothing else.
    const open = (await managerA.get(`/api/alerts/engines?engineId=${engineId}&state=open`)).body
    expect(open[0].alerts.map((a: any) => a.id)).toEqual([lateId])
    // With the page's filters, only what it shows: the late one is an oil caution, not a life limit.
    expect((await managerA.post(`/api/alerts/engines/${engineId}/ack`, { cause: 'life' })).body).toEqual({ engineId, acknowledged: 0, alertIds: [] })
    expect((await managerA.post(`/api/alerts/engines/${engineId}/ack`, { level: 'nonsense' })).status).toBe(400)
    const again = await managerA.post(`/api/alerts/engines/${engineId}/ack`, { cause: 'oil', level: 'caution' })
    expect(again.body).toEqual({ engineId, acknowledged: 1, alertIds: [lateId] })
    const filtered = (await supplier.get('/api/audit?entity=engine&action=acknowledge-alerts')).body.items[0]
    expect(filtered.after).toEqual({ alertIds: [lateId], comment: '', level: 'caution', cause: 'oil' })
    expect((await managerA.post(`/api/alerts/engines/${engineId}/ack`, {})).body.acknowledged).toBe(0)
  })
})

describe('alerts from before one alert per engine and cause', () => {
  it('are folded by the migration: one check run\'s alerts of one engine, cause and level become one, with acknowledgements, recipients and mails', async () => {
    const { up } = await import('../../db/migrations/20261204_01_b_alert_groups_fold')
    const rods = await db()('installations as i').join('components as c', 'c.id', 'i.component_id').where('i.engine_id', engineId).whereIn('i.position', ['rod-1', 'rod-2']).orderBy('i.position').select('c.id', 'c.serial')
    const supplierRow = await db()('engines').where('id', engineId).first()
    const runX = Number((await db()('task_runs').insert({ task: 'life-check', instance: 'before', outcome: 'ok', started_at: new Date() }))[0])
    const runY = Number((await db()('task_runs').insert({ task: 'life-check', instance: 'before', outcome: 'ok', started_at: new Date() }))[0])
    const manager = await db()('users').where('email', USERS.managerA).first()
    const engineer = await db()('users').where('email', USERS.supplierEngineer).first()
    const tag = randomUUID().slice(0, 8)
    const old = async (key: string, kind: string, level: string, rod: any, run: number) => {
      const details = { engineSerial: SERIAL, engineTypeCode: 'KV8', teamName: null, partSerial: rod.serial, partName: 'Connecting rod', position: rod.serial.endsWith('1') ? 'Conrod 1' : 'Conrod 2', status: level, fraction: 1.2, governing: null, event: null, message: 'old' }
      const [id] = await db()('alerts').insert({ alert_key: `${key}:${tag}`, kind, level, engine_id: engineId, component_id: rod.id, supplier_id: supplierRow.supplier_id, team_id: supplierRow.team_id, title: `old ${key}`, details: JSON.stringify(details), task_run_id: run, created_at: new Date() })
      return Number(id)
    }
    const a1 = await old('inspect-rod-1', 'over-rev', 'inspection', rods[0], runX)
    const a2 = await old('inspect-rod-2', 'over-rev', 'inspection', rods[1], runX)
    const b1 = await old('over-rod-1', 'life-over', 'over', rods[0], runX)
    const b2 = await old('over-rod-2', 'life-over', 'over', rods[1], runY)
    await db()('alert_recipients').insert([a1, a2].flatMap((alertId) => [manager, engineer].map((u) => ({ alert_id: alertId, user_id: u.id, by_email: true }))))
    const [mail] = await db()('mail_outbox').insert({ alert_id: a2, user_id: manager.id, to_address: USERS.managerA, subject: 'old', html: 'old', text: 'old', state: 'sent', next_attempt_at: new Date(), created_at: new Date() })
    await db()('alert_acks').insert({ alert_id: b2, user_id: manager.id, at: new Date(), comment: 'seen' })

    await up(db())
    expect(await db()('alerts').where('id', a2).first()).toBeUndefined()
    const folded = await db()('alerts').where('id', a1).first()
    expect([folded.cause, folded.cause_label, folded.group_key, folded.component_id]).toEqual(['over-rev', 'Over-rev', `engine:${engineId}:over-rev:inspection`, null])
    expect(folded.title).toBe(`${SERIAL} over-rev – immediate inspection of 2 parts`)
    expect((await db()('alert_parts').where('alert_id', a1).orderBy('item_key').pluck('item_key'))).toEqual([`inspect-rod-1:${tag}`, `inspect-rod-2:${tag}`])
    expect((await db()('alert_recipients').where('alert_id', a1).pluck('user_id')).sort()).toEqual([manager.id, engineer.id].sort())
    expect((await db()('mail_outbox').where('id', mail).first()).alert_id).toBe(a1)
    // Different runs stay apart, each with its one part and its own acknowledgement.
    for (const [id, acked] of [[b1, 0], [b2, 1]] as const) {
      const row = await db()('alerts').where('id', id).first()
      expect(row.cause).toBe('life:Crank drive')
      expect(Number((await db()('alert_parts').where('alert_id', id).count({ n: '*' }).first())!.n)).toBe(1)
      expect(Number((await db()('alert_acks').where('alert_id', id).count({ n: '*' }).first())!.n)).toBe(acked)
    }
    // Running it again changes nothing.
    await up(db())
    expect(Number((await db()('alert_parts').where('alert_id', a1).count({ n: '*' }).first())!.n)).toBe(2)
  })
})
