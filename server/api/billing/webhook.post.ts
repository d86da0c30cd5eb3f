import { applyPaymentEvent, type PaymentEvent } from '../../services/billing/invoices'

// The payment service's webhook. No session: the signature (checked with the SDK's webhook helper
// against the shared secret) is what admits the request; a bad or replayed one answers 400.
export default defineEventHandler(async (event) => {
  const payload = (await readRawBody(event, 'utf8')) ?? ''
  const verified = verifiedPaymentEvent(payload, getHeader(event, 'stripe-signature'))
  return callInTransaction(applyPaymentEvent, verified as unknown as PaymentEvent)
})
