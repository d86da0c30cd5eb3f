// Delivers the outbox: each mail is claimed by one deliverer, sent, and recorded. A failure waits
// 1, 2, 4, 8 ... minutes (capped) before the next try; after MAX_ATTEMPTS it is marked failed for
// the admins. Nothing is lost while the mail server is down: the rows simply stay pending.
import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'

export const MAX_ATTEMPTS = 8
export const MAX_BACKOFF_MINUTES = 60
const CLAIM_MS = 5 * 60_000
const BATCH = 50

export interface MailTransport {
  sendMail(message: { from: string; to: string; subject: string; html: string; text: string }): Promise<unknown>
}

export interface DeliverDeps {
  db: Knex
  transport: MailTransport
  now: () => Date
  from: string
  instance: string
  maxAttempts?: number
  /** Record the round in task_runs (the scheduler does; a delivery right after a check is folded into it). */
  recordRun?: boolean
}

export interface DeliverResult {
  sent: number
  retried: number
  failed: number
  /** true when the round stopped early because the mail server could not be reached */
  serverDown: boolean
}

/**
 * A mail already handed to the mail server must be recorded as sent, or it would go out again once
 * its claim runs out. When the database is away for a moment (a cluster node lost, the writer
 * switching), the record is tried again for up to RECORD_SENT_WAIT_MS before the error is raised.
 */
const RECORD_SENT_WAIT_MS = 30_000
async function recordSent(update: () => Promise<unknown>) {
  const end = Date.now() + RECORD_SENT_WAIT_MS
  for (;;) {
    try {
      await update()
      return
    } catch (error) {
      if (Date.now() > end) throw error
      await new Promise((r) => setTimeout(r, 500))
    }
  }
}

/** Minutes to wait after the n-th failed attempt (n >= 1). */
export function backoffMinutes(attempts: number): number {
  return Math.min(2 ** Math.max(0, attempts - 1), MAX_BACKOFF_MINUTES)
}

// Errors that say the server is unreachable rather than that this one message was refused.
const CONNECTION_CODES = new Set(['ECONNREFUSED', 'ECONNECTION', 'ETIMEDOUT', 'ESOCKET', 'EDNS', 'ECONNRESET', 'EHOSTUNREACH'])

export async function deliverOutbox(deps: DeliverDeps): Promise<DeliverResult> {
  const { db } = deps
  const maxAttempts = deps.maxAttempts ?? MAX_ATTEMPTS
  const token = `${deps.instance}:${randomUUID()}`.slice(0, 64)
  const result: DeliverResult = { sent: 0, retried: 0, failed: 0, serverDown: false }
  const startedAt = deps.now()
  const seen = new Set<number>()

  rounds: for (let round = 0; round < 100; round++) {
    const now = deps.now()
    const due = await db('mail_outbox')
      .where('state', 'pending')
      .where('next_attempt_at', '<=', now)
      .where((q) => q.whereNull('claimed_until').orWhere('claimed_until', '<', now))
      .whereNotIn('id', [...seen, 0])
      .orderBy('id')
      .limit(BATCH)
      .select('id')
    if (due.length === 0) break
    for (const { id } of due) {
      seen.add(id)
      const at = deps.now()
      // The claim is one conditional UPDATE: only one deliverer can win it.
      const claimed = await db('mail_outbox')
        .where('id', id)
        .where('state', 'pending')
        .where((q) => q.whereNull('claimed_until').orWhere('claimed_until', '<', at))
        .update({ claimed_by: token, claimed_until: new Date(at.getTime() + CLAIM_MS) })
      if (claimed !== 1) continue
      const row = await db('mail_outbox').where('id', id).first()
      let mailed = false
      try {
        await deps.transport.sendMail({ from: deps.from, to: row.to_address, subject: row.subject, html: row.html, text: row.text })
        mailed = true
      } catch (e: any) {
        const attempts = row.attempts + 1
        const failed = attempts >= maxAttempts
        const when = deps.now()
        await db('mail_outbox')
          .where({ id, claimed_by: token })
          .update({
            state: failed ? 'failed' : 'pending',
            attempts,
            last_error: `${e?.code ? `${e.code}: ` : ''}${String(e?.message ?? e)}`.slice(0, 1000),
            next_attempt_at: failed ? when : new Date(when.getTime() + backoffMinutes(attempts) * 60_000),
            claimed_by: null,
            claimed_until: null,
          })
        if (failed) result.failed++
        else result.retried++
        if (CONNECTION_CODES.has(e?.code)) {
          // The server is down: the rest keep their turn instead of each burning an attempt.
          result.serverDown = true
          break rounds
        }
      }
      if (mailed) {
        await recordSent(() => db('mail_outbox').where({ id, claimed_by: token }).update({ state: 'sent', sent_at: deps.now(), attempts: row.attempts + 1, last_error: null, claimed_by: null, claimed_until: null }))
        result.sent++
      }
    }
  }

  if (deps.recordRun && (result.sent || result.retried || result.failed)) {
    await db('task_runs').insert({
      task: 'deliver-outbox',
      instance: deps.instance,
      outcome: result.serverDown ? 'error' : 'ok',
      started_at: startedAt,
      finished_at: deps.now(),
      mails_sent: result.sent,
      mails_failed: result.failed,
      error: result.serverDown ? 'the mail server could not be reached; pending mails wait for their next attempt' : null,
    })
  }
  return result
}
