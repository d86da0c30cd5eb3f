// Issuing with its invoice, and what the payment service tells us back through its webhook.
import type { Knex } from 'knex'
import type { StatementDto } from '#shared/types/billing'
import type { Actor } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest } from '../../utils/errors'
import { deliverInvoicesNow } from '../../utils/billing-events'
import { getStatement, issueStatement } from './statements'

/** Issues in one transaction, then tries the invoice at once; the answer says "queued" when the service is down. */
export async function issueWithInvoice(db: Knex, actor: Actor, id: number): Promise<StatementDto> {
  await db.transaction((trx) => issueStatement(trx, actor, id))
  await deliverInvoicesNow(id)
  return getStatement(db, actor, id)
}

const STATUS_BY_EVENT: Record<string, 'open' | 'paid' | 'overdue' | 'void'> = {
  'invoice.finalized': 'open',
  'invoice.paid': 'paid',
  'invoice.overdue': 'overdue',
  'invoice.voided': 'void',
}

export interface PaymentEvent {
  id: string
  type: string
  created: number
  data: { object: { id?: string; object?: string; metadata?: Record<string, string> | null } }
}

/** Applies one verified event once: a replayed event id is refused with 400 and changes nothing. */
export async function applyPaymentEvent(trx: Knex.Transaction, evt: PaymentEvent, now = new Date()) {
  const seen = await trx('payment_webhook_events').where('event_id', evt.id).forUpdate().first('event_id')
  if (seen) badRequest(`Invalid input: id: event ${evt.id} was already applied`)
  try {
    await trx('payment_webhook_events').insert({ event_id: evt.id, type: evt.type.slice(0, 80), received_at: now })
  } catch (e: any) {
    if (e?.code === 'ER_DUP_ENTRY') badRequest(`Invalid input: id: event ${evt.id} was already applied`)
    throw e
  }
  const status = STATUS_BY_EVENT[evt.type]
  const invoice = evt.data?.object
  if (!status || invoice?.object !== 'invoice' || !invoice.id) return { applied: false }
  const statement = await trx('statements').where('invoice_id', invoice.id).orWhere((w) => w.whereNull('invoice_id').where('id', Number(invoice.metadata?.statement_id ?? 0)).where('state', 'issued')).forUpdate().first('id', 'payment_status')
  if (!statement) return { applied: false }
  // Paid and void are final: a late "overdue" or "finalized" does not undo them.
  if (statement.payment_status === 'paid' || statement.payment_status === 'void') return { applied: false, statementId: statement.id }
  await trx('statements').where('id', statement.id).update({ payment_status: status, invoice_id: invoice.id, paid_at: status === 'paid' ? now : null, updated_at: now })
  await audit(trx, null, { entity: 'statement', entityId: statement.id, action: `payment-${status}`, before: { paymentStatus: statement.payment_status }, after: { paymentStatus: status, event: evt.id } })
  return { applied: true, statementId: statement.id, paymentStatus: status }
}
