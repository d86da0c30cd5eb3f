// What Crankledger asks of the payment service, whichever implements it (the SDK-backed one in
// server/utils/payments.ts; a test may hand in its own).
export interface InvoiceLine { lineId: number; description: string; amountMinor: number }

export interface PaymentPort {
  createCustomer(input: { teamId: number; name: string; email: string; address: string | null }, idempotencyKey: string): Promise<{ id: string }>
  /** false when the service answers that it has no such customer */
  customerExists(customerId: string): Promise<boolean>
  createInvoice(input: {
    customerId: string
    currency: string
    statementId: number
    number: string
    dueAt: Date
    lines: InvoiceLine[]
    taxMinor: number
    /** a stable prefix for every call's idempotency key */
    keyPrefix: string
  }): Promise<{ id: string; number: string | null }>
}
