// Wiring of the alert jobs to this server's services: database, fleet life, SMTP, clock, lock.
// Shared by the scheduler plugin, the admin "run now" route and the triggers after a session is stored.
import { hostname } from 'node:os'
import nodemailer from 'nodemailer'
import { deliverOutbox, type DeliverResult, type MailTransport } from '../../tasks/deliver-outbox'
import { runLifeCheck, type Finding, type FindingContext, type LifeCheckResult } from '../../tasks/life-check'
import { mariadbLock } from '../../tasks/lock'
import { fleetLife } from '../services/life'
import { useDb } from './db'

export const ALERT_INSTANCE = `${hostname()}:${process.pid}`

let transport: MailTransport | undefined
function mailTransport(): MailTransport {
  if (!transport) {
    const config = useRuntimeConfig()
    transport = nodemailer.createTransport({ host: config.smtpHost, port: Number(config.smtpPort), ignoreTLS: true, connectionTimeout: 10_000, greetingTimeout: 10_000 })
  }
  return transport
}

/** Checks from other features (oil analysis ...) register here; each answers findings keyed like the life ones. */
const extraProviders: ((ctx: FindingContext) => Promise<Finding[]>)[] = []
export function registerAlertFindings(provider: (ctx: FindingContext) => Promise<Finding[]>) {
  extraProviders.push(provider)
}

export function alertsEnabled(): boolean {
  return String(useRuntimeConfig().alertsEnabled) !== 'false'
}

export async function deliverAlertMail(recordRun = true): Promise<DeliverResult> {
  const config = useRuntimeConfig()
  return deliverOutbox({ db: useDb(), transport: mailTransport(), now: () => new Date(), from: config.mailFrom, instance: ALERT_INSTANCE, recordRun })
}

/** One life check, then one delivery round for what it queued. */
export async function runAlertsNow(): Promise<{ check: LifeCheckResult; delivery: DeliverResult }> {
  const db = useDb()
  const check = await runLifeCheck({
    db,
    fleetLife: (now) => fleetLife(db, now),
    now: () => new Date(),
    lock: mariadbLock(db),
    instance: ALERT_INSTANCE,
    publicUrl: useRuntimeConfig().publicUrl,
    extraFindings: async (ctx) => (await Promise.all(extraProviders.map((p) => p(ctx)))).flat(),
  })
  const delivery = await deliverAlertMail(false)
  if (delivery.sent || delivery.failed) {
    await db('task_runs').where('id', check.runId).update({ mails_sent: delivery.sent, mails_failed: delivery.failed })
  }
  return { check, delivery }
}

let running: Promise<unknown> | null = null
let again = false
let closing = false

/** For shutdown: no new runs, and the one in progress (if any) is finished. */
export async function settleLifeCheck() {
  closing = true
  again = false
  await running
}

/**
 * Runs the check in the background (the request does not wait). Calls while one runs coalesce
 * into one more run afterwards, so a burst of imports costs two checks, not one per import.
 */
export function triggerLifeCheck(): void {
  if (!alertsEnabled() || closing) return
  if (running) {
    again = true
    return
  }
  running = runAlertsNow()
    .catch((e) => console.error('[crankledger] life check failed:', e?.message ?? e))
    .finally(() => {
      running = null
      if (again) {
        again = false
        triggerLifeCheck()
      }
    })
}
