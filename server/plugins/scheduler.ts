// The one place that wires the alert jobs (tasks/) to this server's services: database, fleet
// life, oil findings, SMTP, clock, lock. It schedules them, listens for writes that change life
// ('crankledger:life-changed') and for an admin's "run now" ('crankledger:run-alerts'). A bad
// schedule stops the server at start with a clear message rather than leaving a server that never checks.
import { hostname } from 'node:os'
import cron from 'node-cron'
import nodemailer from 'nodemailer'
import { deliverOutbox, type DeliverResult, type MailTransport } from '../../tasks/deliver-outbox'
import { runLifeCheck, type LifeCheckResult } from '../../tasks/life-check'
import { mariadbLock } from '../../tasks/lock'
import { scheduleProblem } from '../../tasks/schedule'
import { runUploadCleanup } from '../../tasks/upload-cleanup'
import { cleanUpUploads } from '../utils/uploads'
import { fleetLife } from '../services/life'
import { oilFindings } from '../services/oil-alerts'

const ALERT_INSTANCE = `${hostname()}:${process.pid}`

export default defineNitroPlugin((nitroApp) => {
  const config = useRuntimeConfig()
  const problem = scheduleProblem(config.alertSchedule)
  if (problem) {
    console.error(`[crankledger] cannot start: ${problem}`)
    process.exit(1)
  }
  const enabled = String(config.alertsEnabled) !== 'false'
  const jobs = alertJobs()

  // Expired resumable uploads go on every instance, alerts on or off (a removal twice is harmless).
  const uploads = cron.schedule(String(config.uploadCleanupSchedule).trim(), () => runUploadCleanup({ cleanUp: () => cleanUpUploads(), log: (m) => console.log(`[crankledger] ${m}`) }), { name: 'crankledger-upload-cleanup', noOverlap: true })
  nitroApp.hooks.hook('crankledger:draining', async () => {
    await uploads.destroy()
  })

  // An admin's explicit request runs even where the schedule is switched off.
  nitroApp.hooks.hook('crankledger:run-alerts', async (run) => {
    run.result = await jobs.runNow()
  })
  nitroApp.hooks.hook('crankledger:life-changed', () => {
    if (enabled) jobs.trigger()
  })
  if (!enabled) return

  const check = cron.schedule(String(config.alertSchedule).trim(), () => jobs.trigger(), { name: 'crankledger-life-check', noOverlap: true })
  // Retries are due minutes apart, so the outbox is looked at every minute.
  const delivery = cron.schedule('* * * * *', async () => {
    try {
      await jobs.deliver()
    } catch (e: any) {
      console.error('[crankledger] mail delivery failed:', e?.message ?? e)
    }
  }, { name: 'crankledger-outbox', noOverlap: true })

  // Before the pool closes (server/plugins/99.shutdown.ts): no new runs, the one in progress finished.
  nitroApp.hooks.hook('crankledger:draining', async () => {
    await check.destroy()
    await delivery.destroy()
    await jobs.settle()
  })
})

function alertJobs() {
  let transport: MailTransport | undefined
  const mailTransport = (): MailTransport => {
    if (!transport) {
      const config = useRuntimeConfig()
      transport = nodemailer.createTransport({ host: config.smtpHost, port: Number(config.smtpPort), ignoreTLS: true, connectionTimeout: 10_000, greetingTimeout: 10_000 })
    }
    return transport
  }

  const deliver = (recordRun = true): Promise<DeliverResult> =>
    deliverOutbox({ db: useDb(), transport: mailTransport(), now: () => new Date(), from: useRuntimeConfig().mailFrom, instance: ALERT_INSTANCE, recordRun })

  /** One life check, then one delivery round for what it queued. */
  async function runNow(): Promise<{ check: LifeCheckResult; delivery: DeliverResult }> {
    const db = useDb()
    const check = await runLifeCheck({
      db,
      fleetLife: (now) => fleetLife(db, now),
      now: () => new Date(),
      lock: mariadbLock(db),
      instance: ALERT_INSTANCE,
      publicUrl: useRuntimeConfig().publicUrl,
      extraFindings: oilFindings,
    })
    const delivery = await deliver(false)
    if (delivery.sent || delivery.failed) {
      await db('task_runs').where('id', check.runId).update({ mails_sent: delivery.sent, mails_failed: delivery.failed })
    }
    return { check, delivery }
  }

  let running: Promise<unknown> | null = null
  let again = false
  let closing = false

  /**
   * Runs the check in the background (the request does not wait). Calls while one runs coalesce
   * into one more run afterwards, so a burst of imports costs two checks, not one per import.
   */
  function trigger(): void {
    if (closing) return
    if (running) {
      again = true
      return
    }
    running = runNow()
      .catch((e) => console.error('[crankledger] life check failed:', e?.message ?? e))
      .finally(() => {
        running = null
        if (again) {
          again = false
          trigger()
        }
      })
  }

  /** For shutdown: no new runs, and the one in progress (if any) is finished. */
  async function settle() {
    closing = true
    again = false
    await running
  }

  return { deliver, runNow, trigger, settle }
}
