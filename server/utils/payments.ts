// The payment service through its official SDK (stripe), pointed by runtimeConfig at the service
// or, locally and in tests, at the small fake in scripts/payment-fake.ts.
import Stripe from 'stripe'
import type { PaymentPort } from '#shared/types/payments'
import { badRequest } from './errors'

let client: Stripe | undefined

export function paymentClient(): Stripe {
  if (!client) {
    const c = useRuntimeConfig().payment
    client = new Stripe(String(c.apiKey), {
      host: String(c.host),
      port: Number(c.port),
      protocol: c.protocol === 'https' ? 'https' : 'http',
      // The invoice outbox retries with backoff; the SDK itself tries once more at most.
      maxNetworkRetries: 1,
      timeout: 10_000,
    })
  }
  return client
}

/** The SDK-backed port the invoice deliverer is handed. */
export function stripePayments(): PaymentPort {
  return {
    async createCustomer(input, idempotencyKey) {
      const c = await paymentClient().customers.create({ name: input.name, email: input.email, address: input.address ? { line1: input.address.split('\n')[0] } : undefined, metadata: { team_id: String(input.teamId) } }, { idempotencyKey })
      return { id: c.id }
    },
    async customerExists(customerId) {
      try {
        const c = await paymentClient().customers.retrieve(customerId)
        return !(c as { deleted?: boolean }).deleted
      } catch (e: any) {
        if (e?.statusCode === 404 || e?.code === 'resource_missing') return false
        throw e
      }
    },
    async createInvoice(input) {
      const stripe = paymentClient()
      const k = input.keyPrefix
      const invoice = await stripe.invoices.create(
        { customer: input.customerId, currency: input.currency.toLowerCase(), collection_method: 'send_invoice', due_date: Math.floor(input.dueAt.getTime() / 1000), auto_advance: false, metadata: { statement_id: String(input.statementId), statement_number: input.number } },
        { idempotencyKey: `${k}-invoice` },
      )
      for (const line of input.lines) {
        await stripe.invoiceItems.create({ customer: input.customerId, invoice: invoice.id, currency: input.currency.toLowerCase(), amount: line.amountMinor, description: line.description }, { idempotencyKey: `${k}-line-${line.lineId}` })
      }
      if (input.taxMinor !== 0) {
        await stripe.invoiceItems.create({ customer: input.customerId, invoice: invoice.id, currency: input.currency.toLowerCase(), amount: input.taxMinor, description: 'Tax' }, { idempotencyKey: `${k}-tax` })
      }
      const final = await stripe.invoices.finalizeInvoice(invoice.id!, {}, { idempotencyKey: `${k}-finalize` })
      return { id: final.id!, number: final.number ?? null }
    },
  }
}

/** The service's signed webhook: a bad, stale or missing signature is refused with 400 naming it. */
export function verifiedPaymentEvent(payload: string, signature: string | undefined): Stripe.Event {
  if (!signature) badRequest('Invalid input: stripe-signature: the header is missing')
  try {
    // The SDK's default tolerance (300 s) refuses a signature replayed later.
    return paymentClient().webhooks.constructEvent(payload, signature, String(useRuntimeConfig().payment.webhookSecret))
  } catch {
    badRequest('Invalid input: stripe-signature: the signature does not match or is too old')
  }
}
