// Wires the invoice deliverer (tasks/deliver-invoices.ts) to the payment service's SDK: every
// minute for retries, and at once when a statement is issued ('crankledger:deliver-invoices').
import { hostname } from 'node:os'
import cron from 'node-cron'
import { deliverInvoices } from '../../tasks/deliver-invoices'

const INSTANCE = `${hostname()}:${process.pid}`

export default defineNitroPlugin((nitroApp) => {
  const run = (statementId?: number) => deliverInvoices({ db: useDb(), payments: stripePayments(), now: () => new Date(), instance: INSTANCE, statementId })

  nitroApp.hooks.hook('crankledger:deliver-invoices', async (r) => {
    r.result = await run(r.statementId)
  })
  if (String(useRuntimeConfig().alertsEnabled) === 'false') return
  const retries = cron.schedule('* * * * *', async () => {
    try {
      await run()
    } catch (e: any) {
      console.error('[crankledger] invoice delivery failed:', e?.message ?? e)
    }
  }, { name: 'crankledger-invoices', noOverlap: true })
  nitroApp.hooks.hook('crankledger:draining', async () => {
    await retries.destroy()
  })
})
