// The local payment fake answers the official SDK as the service documents it: the same
// idempotency key with the same request gives the first answer again, with another request it is
// refused; invoice items go on a draft; finalizing numbers the invoice.
import { createServer } from 'node:net'
import Stripe from 'stripe'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPaymentFake, type PaymentFake } from '../../scripts/payment-fake'

let fake: PaymentFake
let stripe: Stripe
let port: number

beforeAll(async () => {
  port = await new Promise<number>((resolve) => {
    const s = createServer().listen(0, '127.0.0.1', () => {
      const p = (s.address() as { port: number }).port
      s.close(() => resolve(p))
    })
  })
  fake = await startPaymentFake({ port, apiKey: 'sk_test_unit', webhookSecret: 'whsec_unit' })
  stripe = new Stripe('sk_test_unit', { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0 })
})
afterAll(async () => {
  await fake?.close()
})

describe('payment fake', () => {
  it('replays an idempotent request and refuses the key with other parameters', async () => {
    const a = await stripe.customers.create({ name: 'Team One', email: 'a@example.test' }, { idempotencyKey: 'k-1' })
    const b = await stripe.customers.create({ name: 'Team One', email: 'a@example.test' }, { idempotencyKey: 'k-1' })
    expect(b.id).toBe(a.id)
    expect(fake.customers.size).toBe(1)
    await expect(stripe.customers.create({ name: 'Team Two' }, { idempotencyKey: 'k-1' })).rejects.toMatchObject({ type: 'StripeIdempotencyError' })
  })

  it('builds, totals and numbers an invoice', async () => {
    const c = await stripe.customers.create({ name: 'Team Three' })
    const inv = await stripe.invoices.create({ customer: c.id, currency: 'eur', metadata: { statement_id: '9' } })
    await stripe.invoiceItems.create({ customer: c.id, invoice: inv.id, currency: 'eur', amount: 12_500, description: 'fee' })
    await stripe.invoiceItems.create({ customer: c.id, invoice: inv.id, currency: 'eur', amount: -2_500, description: 'credit' })
    const final = await stripe.invoices.finalizeInvoice(inv.id!)
    expect(final).toMatchObject({ status: 'open', total: 10_000, metadata: { statement_id: '9' } })
    expect(final.number).toMatch(/^FAKE-\d{4}$/)
    await expect(stripe.invoiceItems.create({ customer: c.id, invoice: inv.id, currency: 'eur', amount: 1 })).rejects.toMatchObject({ statusCode: 400 })
  })

  it('answers 404 for a customer it does not know', async () => {
    await expect(stripe.customers.retrieve('cus_unknown')).rejects.toMatchObject({ statusCode: 404, code: 'resource_missing' })
  })

  it('refuses a wrong key', async () => {
    const wrong = new Stripe('sk_test_other', { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0 })
    await expect(wrong.customers.create({ name: 'x' })).rejects.toMatchObject({ statusCode: 401 })
  })
})
