// Alerts as the people who may see them see them: scoped by the owner recorded with each alert.
import type { Knex } from 'knex'
import { ALERT_KINDS, ALERT_KIND_LABELS, ALERT_MAIL_ROLES, emailWanted, type AlertDto, type AlertPrefs } from '#shared/schemas/alerts'
import type { Actor } from '../utils/guard'
import { scopeQuery } from '../utils/guard'
import { audit } from '../utils/audit'
import { conflict, notFound } from '../utils/errors'
import { iso, json } from '../utils/db'
import type { AlertRun } from '../utils/life-events'

const OWNER = { supplier: 'a.supplier_id', team: 'a.team_id' }

function toAlertDto(r: any, acks: any[]): AlertDto {
  const mine = acks.filter((k) => k.alert_id === r.id)
  return {
    id: Number(r.id),
    kind: r.kind,
    level: r.level,
    title: r.title,
    engineId: r.engine_id,
    componentId: r.component_id ?? null,
    teamId: r.team_id ?? null,
    createdAt: iso(r.created_at)!,
    details: json(r.details, {} as any),
    acks: mine.map((k) => ({ userId: k.user_id, userName: k.user_name, at: iso(k.at)!, comment: k.comment })),
    acknowledged: mine.length > 0,
  }
}

async function acksFor(db: Knex | Knex.Transaction, ids: number[]) {
  if (!ids.length) return []
  return db('alert_acks as k').join('users as u', 'u.id', 'k.user_id').whereIn('k.alert_id', ids).orderBy('k.at').select('k.*', 'u.name as user_name')
}

export async function listAlerts(db: Knex, actor: Actor, q: { state: 'open' | 'acknowledged' | 'all'; engineId?: number; limit: number }): Promise<AlertDto[]> {
  const qb = scopeQuery(db('alerts as a'), actor, OWNER).orderBy('a.created_at', 'desc').orderBy('a.id', 'desc').limit(q.limit).select('a.*')
  if (q.engineId) qb.where('a.engine_id', q.engineId)
  if (q.state === 'open') qb.whereNotExists(db('alert_acks').whereRaw('alert_acks.alert_id = a.id'))
  if (q.state === 'acknowledged') qb.whereExists(db('alert_acks').whereRaw('alert_acks.alert_id = a.id'))
  const rows = await qb
  const acks = await acksFor(db, rows.map((r: any) => r.id))
  return rows.map((r: any) => toAlertDto(r, acks))
}

export async function acknowledgeAlert(db: Knex, actor: Actor, id: number, comment: string): Promise<AlertDto> {
  return db.transaction(async (trx) => {
    const row = await scopeQuery(trx('alerts as a'), actor, OWNER).where('a.id', id).forUpdate().first('a.*')
    if (!row) notFound('Alert')
    const already = await trx('alert_acks').where({ alert_id: id, user_id: actor.id }).first()
    if (already) conflict('You have already acknowledged this alert')
    await trx('alert_acks').insert({ alert_id: id, user_id: actor.id, at: new Date(), comment })
    await audit(trx, actor, { entity: 'alert', entityId: id, action: 'acknowledge', after: { comment } })
    return toAlertDto(row, await acksFor(trx, [id]))
  })
}

export interface AlertPrefsView {
  receivesEmail: boolean
  kinds: { kind: (typeof ALERT_KINDS)[number]; label: string; email: boolean }[]
}

export async function alertPrefsOf(db: Knex, actor: Actor): Promise<AlertPrefsView> {
  const row = await db('users').where('id', actor.id).first('alert_prefs')
  const stored = json<unknown>(row?.alert_prefs, null)
  return {
    receivesEmail: (ALERT_MAIL_ROLES as readonly string[]).includes(actor.role),
    kinds: ALERT_KINDS.map((kind) => ({ kind, label: ALERT_KIND_LABELS[kind], email: emailWanted(stored, kind) })),
  }
}

export async function saveAlertPrefs(db: Knex, actor: Actor, input: AlertPrefs): Promise<AlertPrefsView> {
  await db.transaction(async (trx) => {
    const row = await trx('users').where('id', actor.id).forUpdate().first('alert_prefs')
    const before = json<{ email?: Record<string, boolean> }>(row?.alert_prefs, {})
    const after = { ...before, email: { ...(before.email ?? {}), ...input.email } }
    await trx('users').where('id', actor.id).update({ alert_prefs: JSON.stringify(after) })
    await audit(trx, actor, { entity: 'user', entityId: actor.id, action: 'alert-prefs', before, after })
  })
  return alertPrefsOf(db, actor)
}

export async function recentTaskRuns(db: Knex, limit = 50) {
  const rows = await db('task_runs').orderBy('started_at', 'desc').orderBy('id', 'desc').limit(limit)
  return rows.map((r: any) => ({
    id: Number(r.id),
    task: r.task,
    instance: r.instance,
    outcome: r.outcome,
    startedAt: iso(r.started_at)!,
    finishedAt: iso(r.finished_at),
    findings: r.findings,
    alertsCreated: r.alerts_created,
    mailsQueued: r.mails_queued,
    mailsSent: r.mails_sent,
    mailsFailed: r.mails_failed,
    error: r.error ?? null,
  }))
}

export async function outboxView(db: Knex, q: { state?: 'pending' | 'sent' | 'failed'; limit: number }) {
  const qb = db('mail_outbox').orderByRaw("FIELD(state, 'failed', 'pending', 'sent')").orderBy('id', 'desc').limit(q.limit)
    .select('id', 'alert_id', 'to_address', 'subject', 'state', 'attempts', 'next_attempt_at', 'last_error', 'sent_at', 'created_at')
  if (q.state) qb.where('state', q.state)
  const [rows, counts] = await Promise.all([qb, db('mail_outbox').groupBy('state').select('state').count({ n: '*' })])
  return {
    counts: Object.fromEntries(['pending', 'sent', 'failed'].map((s) => [s, Number(counts.find((c: any) => c.state === s)?.n ?? 0)])),
    mails: rows.map((r: any) => ({
      id: Number(r.id),
      alertId: r.alert_id === null ? null : Number(r.alert_id),
      to: r.to_address,
      subject: r.subject,
      state: r.state,
      attempts: r.attempts,
      nextAttemptAt: iso(r.next_attempt_at),
      lastError: r.last_error ?? null,
      sentAt: iso(r.sent_at),
      createdAt: iso(r.created_at)!,
    })),
  }
}

/** Runs the life check and one mail round now, through the jobs the scheduler plugin wires (it fills the answer). */
export async function runAlertsNow() {
  const run: AlertRun = {}
  await useNitroApp().hooks.callHook('crankledger:run-alerts', run)
  return run.result
}
