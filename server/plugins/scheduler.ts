// The one place that schedules the alert jobs. A bad schedule stops the server at start with a
// clear message rather than leaving a server that never checks.
import cron from 'node-cron'
import { scheduleProblem } from '../../tasks/schedule'
import { alertsEnabled, deliverAlertMail, triggerLifeCheck } from '../utils/alerts'

export default defineNitroPlugin((nitroApp) => {
  const config = useRuntimeConfig()
  const problem = scheduleProblem(config.alertSchedule)
  if (problem) {
    console.error(`[crankledger] cannot start: ${problem}`)
    process.exit(1)
  }
  if (!alertsEnabled()) return

  const check = cron.schedule(String(config.alertSchedule).trim(), () => triggerLifeCheck(), { name: 'crankledger-life-check', noOverlap: true })
  // Retries are due minutes apart, so the outbox is looked at every minute.
  const delivery = cron.schedule('* * * * *', async () => {
    try {
      await deliverAlertMail()
    } catch (e: any) {
      console.error('[crankledger] mail delivery failed:', e?.message ?? e)
    }
  }, { name: 'crankledger-outbox', noOverlap: true })

  nitroApp.hooks.hook('close', async () => {
    await check.destroy()
    await delivery.destroy()
  })
})
