// Delivers issued statements to the payment service as invoices, the way deliver-outbox.ts
// delivers mail: each row is claimed by one deliverer; a failure waits 1, 2, 4 ... minutes; while
// the service is down the rows stay pending and the statement shows "queued". Every call carries an
// idempotency key derived from the statement, so a retry after a lost answer never bills twice.
import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import type { PaymentPort } from '#shared/types/payments'
import { backoffMinutes, MAX_ATTEMPTS } from './deliver-outbox'

const CLAIM_MS = 5 * 60_000
const BATCH = 20

export interface InvoiceDeliverDeps {
  db: Knex
  payments: PaymentPort
  now: () => Date
  instance: string
  maxAttempts?: number
  /** only this statement (an issue asks for its own invoice at once) */
  statementId?: number
}

export interface InvoiceDeliverResult { sent: number; retried: number; failed: number; serviceDown: boolean }

/** The idempotency keys of one statement: the same statement always sends the same keys. */
export function statementKeyPrefix(statementId: number, number: string) {
  return `crankledger-statement-${statementId}-${number}`
}

export async function deliverInvoices(deps: InvoiceDeliverDeps): Promise<InvoiceDeliverResult> {
  const { db } = deps
  const maxAttempts = deps.maxAttempts ?? MAX_ATTEMPTS
  const token = `${deps.instance}:${randomUUID()}`.slice(0, 64)
  const result: InvoiceDeliverResult = { sent: 0, retried: 0, failed: 0, serviceDown: false }
  const now = deps.now()
  const q = db('invoice_outbox')
    .where('state', 'pending')
    .where((w) => w.whereNull('claimed_until').orWhere('claimed_until', '<', now))
    .orderBy('id')
    .limit(BATCH)
  if (deps.statementId) q.where('statement_id', deps.statementId)
  else q.where('next_attempt_at', '<=', now)
  const due = await q.select('id')
  for (const { id } of due) {
    const at = deps.now()
    // One conditional UPDATE: only one deliverer wins the row.
    const claimed = await db('invoice_outbox')
      .where({ id, state: 'pending' })
      .where((w) => w.whereNull('claimed_until').orWhere('claimed_until', '<', at))
      .update({ claimed_by: token, claimed_until: new Date(at.getTime() + CLAIM_MS) })
    if (claimed !== 1) continue
    const row = await db('invoice_outbox').where('id', id).first()
    try {
      await deliverOne(deps, row.statement_id)
      await db('invoice_outbox').where({ id, claimed_by: token }).update({ state: 'sent', sent_at: deps.now(), attempts: row.attempts + 1, last_error: null, claimed_by: null, claimed_until: null })
      result.sent++
    } catch (e: any) {
      const attempts = row.attempts + 1
      const failed = attempts >= maxAttempts
      const when = deps.now()
      await db('invoice_outbox')
        .where({ id, claimed_by: token })
        .update({ state: failed ? 'failed' : 'pending', attempts, last_error: String(e?.message ?? e).slice(0, 1000), next_attempt_at: failed ? when : new Date(when.getTime() + backoffMinutes(attempts) * 60_000), claimed_by: null, claimed_until: null })
      if (failed) result.failed++
      else result.retried++
      if (e?.type === 'StripeConnectionError' || ['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT'].includes(e?.code)) {
        result.serviceDown = true
        break
      }
    }
  }
  return result
}

async function deliverOne(deps: InvoiceDeliverDeps, statementId: number) {
  const { db } = deps
  const st = await db('statements as st').join('organisations as t', 't.id', 'st.team_id').where('st.id', statementId).first('st.*', 't.name as team_name', 't.billing_email', 't.billing_address')
  let customer = await db('billing_customers').where('team_id', st.team_id).first('customer_id')
  if (!customer) {
    // Once per team: the key names the team, so two deliverers racing get the same customer back.
    const created = await deps.payments.createCustomer({ teamId: st.team_id, name: st.team_name, email: st.billing_email, address: st.billing_address }, `crankledger-team-${st.team_id}-customer`)
    await db('billing_customers').insert({ team_id: st.team_id, customer_id: created.id }).onConflict('team_id').ignore()
    customer = await db('billing_customers').where('team_id', st.team_id).first('customer_id')
  }
  customer = await existingCustomer(deps, st, customer.customer_id)
  const lines = await db('statement_lines').where('statement_id', statementId).whereNot('amount_minor', 0).orderBy('sort').select('id', 'description', 'amount_minor')
  const invoice = await deps.payments.createInvoice({
    customerId: customer.customer_id,
    currency: st.currency,
    statementId,
    number: st.number,
    dueAt: new Date(st.due_at),
    lines: lines.map((l: any) => ({ lineId: l.id, description: l.description, amountMinor: Number(l.amount_minor) })),
    taxMinor: Number(st.tax_minor),
    keyPrefix: statementKeyPrefix(statementId, st.number),
  })
  // A webhook may already have said paid: only a queued statement becomes open here.
  await db('statements').where('id', statementId).update({ invoice_id: invoice.id, invoice_number: invoice.number })
  await db('statements').where({ id: statementId, payment_status: 'queued' }).update({ payment_status: 'open' })
}

/**
 * The service may no longer know a customer we stored (a service account reset, or the local
 * fake restarted while the database kept its rows): a new one is created once, with a key
 * derived from the one it replaces, so concurrent deliverers still agree on one.
 */
async function existingCustomer(deps: InvoiceDeliverDeps, st: any, customerId: string): Promise<{ customer_id: string }> {
  if (await deps.payments.customerExists(customerId)) return { customer_id: customerId }
  const created = await deps.payments.createCustomer({ teamId: st.team_id, name: st.team_name, email: st.billing_email, address: st.billing_address }, `crankledger-team-${st.team_id}-customer-after-${customerId}`)
  await deps.db('billing_customers').where({ team_id: st.team_id, customer_id: customerId }).update({ customer_id: created.id })
  return (await deps.db('billing_customers').where('team_id', st.team_id).first('customer_id'))!
}
