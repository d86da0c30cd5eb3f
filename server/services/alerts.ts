// Alerts as the people who may see them see them: scoped by the owner recorded with each alert.
// One alert per engine and cause, listing its parts; the page reads them grouped by engine.
import type { Knex } from 'knex'
import {
  ALERT_KINDS, ALERT_KIND_LABELS, ALERT_MAIL_ROLES, KINDS_OF_CAUSE, causeOfKind, emailWanted, mailModes, levelRank,
  type AlertDto, type AlertListFilter, type AlertPartDto, type AlertPrefs, type EngineAlertsDto,
} from '#shared/schemas/alerts'
import { orderParts } from '#shared/domain/alert-groups'
import type { Actor } from '../utils/guard'
import { scopeQuery } from '../utils/guard'
import { audit } from '../utils/audit'
import { conflict, notFound } from '../utils/errors'
import { iso, json } from '../utils/db'
import type { AlertRun } from '../utils/life-events'
import { engineRowFor } from './engine-rows'

const OWNER = { supplier: 'a.supplier_id', team: 'a.team_id' }

function toAlertDto(r: any, acks: any[], parts: any[]): AlertDto {
  const mine = acks.filter((k) => Number(k.alert_id) === Number(r.id))
  const own: AlertPartDto[] = parts
    .filter((p) => Number(p.alert_id) === Number(r.id) && p.component_id !== null)
    .map((p) => {
      const d = json<any>(p.details, {})
      return { componentId: p.component_id, serial: d.partSerial ?? null, name: d.partName ?? null, position: d.position ?? null, fraction: d.fraction ?? null, governing: d.governing ?? null, addedAt: iso(p.created_at)! }
    })
  return {
    id: Number(r.id),
    kind: r.kind,
    cause: causeOfKind(r.kind),
    causeLabel: r.cause_label || r.kind,
    level: r.level,
    title: r.title,
    engineId: r.engine_id,
    teamId: r.team_id ?? null,
    createdAt: iso(r.created_at)!,
    updatedAt: iso(r.updated_at ?? r.created_at)!,
    details: json(r.details, {} as any),
    parts: orderParts(own),
    acks: mine.map((k) => ({ userId: k.user_id, userName: k.user_name, at: iso(k.at)!, comment: k.comment })),
    acknowledged: mine.length > 0,
  }
}

async function acksFor(db: Knex | Knex.Transaction, ids: number[]) {
  if (!ids.length) return []
  return db('alert_acks as k').join('users as u', 'u.id', 'k.user_id').whereIn('k.alert_id', ids).orderBy('k.at').select('k.*', 'u.name as user_name')
}

async function partsFor(db: Knex | Knex.Transaction, ids: number[]) {
  if (!ids.length) return []
  return db('alert_parts').whereIn('alert_id', ids).orderBy('id').select('alert_id', 'component_id', 'details', 'created_at')
}

async function dtos(db: Knex | Knex.Transaction, rows: any[]) {
  const ids = rows.map((r: any) => Number(r.id))
  const [acks, parts] = await Promise.all([acksFor(db, ids), partsFor(db, ids)])
  return rows.map((r: any) => toAlertDto(r, acks, parts))
}

const unacked = (db: Knex | Knex.Transaction) => db('alert_acks').whereRaw('alert_acks.alert_id = a.id')

/** Newest first (the last time a part joined), filtered by state, engine, level and cause. */
export async function listAlerts(db: Knex, actor: Actor, q: AlertListFilter): Promise<AlertDto[]> {
  const qb = scopeQuery(db('alerts as a'), actor, OWNER)
    .orderByRaw('COALESCE(a.updated_at, a.created_at) DESC')
    .orderBy('a.id', 'desc')
    .limit(q.limit)
    .select('a.*')
  if (q.engineId) qb.where('a.engine_id', q.engineId)
  if (q.level) qb.where('a.level', q.level)
  if (q.cause) qb.whereIn('a.kind', KINDS_OF_CAUSE[q.cause])
  if (q.state === 'open') qb.whereNotExists(unacked(db))
  if (q.state === 'acknowledged') qb.whereExists(unacked(db))
  return dtos(db, await qb)
}

/** The same alerts grouped by engine: the engine with the most severe open alert first, then the newest; in each, most severe then newest. */
export async function listAlertsByEngine(db: Knex, actor: Actor, q: AlertListFilter): Promise<EngineAlertsDto[]> {
  const alerts = await listAlerts(db, actor, q)
  const groups = new Map<number, AlertDto[]>()
  for (const a of alerts) groups.set(a.engineId, [...(groups.get(a.engineId) ?? []), a])
  const bySeverity = (a: AlertDto, b: AlertDto) => Number(a.acknowledged) - Number(b.acknowledged) || levelRank(a.level) - levelRank(b.level) || b.updatedAt.localeCompare(a.updatedAt) || b.id - a.id
  const out = [...groups.entries()].map(([engineId, list]) => {
    const sorted = [...list].sort(bySeverity)
    const open = sorted.filter((a) => !a.acknowledged)
    return {
      engineId,
      engineSerial: sorted[0]!.details.engineSerial,
      teamName: sorted[0]!.details.teamName ?? null,
      open: open.length,
      worstLevel: (open[0] ?? sorted[0]!).level,
      latestAt: sorted.reduce((t, a) => (a.updatedAt > t ? a.updatedAt : t), ''),
      alerts: sorted,
    }
  })
  return out.sort((a, b) => Number(b.open > 0) - Number(a.open > 0) || levelRank(a.worstLevel) - levelRank(b.worstLevel) || b.latestAt.localeCompare(a.latestAt))
}

export async function acknowledgeAlert(db: Knex, actor: Actor, id: number, comment: string): Promise<AlertDto> {
  return db.transaction(async (trx) => {
    const row = await scopeQuery(trx('alerts as a'), actor, OWNER).where('a.id', id).forUpdate().first('a.*')
    if (!row) notFound('Alert')
    const already = await trx('alert_acks').where({ alert_id: id, user_id: actor.id }).first()
    if (already) conflict('You have already acknowledged this alert')
    await trx('alert_acks').insert({ alert_id: id, user_id: actor.id, at: new Date(), comment })
    await audit(trx, actor, { entity: 'alert', entityId: id, action: 'acknowledge', after: { comment } })
    return (await dtos(trx, [row]))[0]!
  })
}

/**
 * Acknowledges every open alert of one engine the actor may see (up to `throughId` when given, so
 * an alert that arrived after the page was read is not acknowledged unseen), and only those of the
 * page's level and cause when it filters. One audit entry lists them.
 */
export async function acknowledgeEngineAlerts(db: Knex, actor: Actor, engineId: number, input: { comment: string; throughId?: number } & Pick<AlertListFilter, 'level' | 'cause'>) {
  return db.transaction(async (trx) => {
    const visible = scopeQuery(trx('alerts as a'), actor, OWNER).where('a.engine_id', engineId)
    if (!(await visible.clone().first('a.id'))) await engineRowFor(trx, actor, engineId)
    const open = visible.clone().whereNotExists(unacked(trx)).orderBy('a.id').forUpdate()
    if (input.throughId) open.where('a.id', '<=', input.throughId)
    if (input.level) open.where('a.level', input.level)
    if (input.cause) open.whereIn('a.kind', KINDS_OF_CAUSE[input.cause])
    const ids: number[] = (await open.pluck('a.id')).map(Number)
    if (!ids.length) return { engineId, acknowledged: 0, alertIds: [] as number[] }
    const at = new Date()
    await trx('alert_acks').insert(ids.map((id) => ({ alert_id: id, user_id: actor.id, at, comment: input.comment })))
    await audit(trx, actor, { entity: 'engine', entityId: engineId, action: 'acknowledge-alerts', after: { alertIds: ids, comment: input.comment, ...(input.level ? { level: input.level } : {}), ...(input.cause ? { cause: input.cause } : {}) } })
    return { engineId, acknowledged: ids.length, alertIds: ids }
  })
}

export interface AlertPrefsView {
  receivesEmail: boolean
  kinds: { kind: (typeof ALERT_KINDS)[number]; label: string; email: boolean }[]
  /** one digest after each check that changed something */
  digest: boolean
  /** "do not run" and "inspect now" at once as well */
  immediate: boolean
}

export async function alertPrefsOf(db: Knex, actor: Actor): Promise<AlertPrefsView> {
  const row = await db('users').where('id', actor.id).first('alert_prefs')
  const stored = json<unknown>(row?.alert_prefs, null)
  return {
    receivesEmail: (ALERT_MAIL_ROLES as readonly string[]).includes(actor.role),
    kinds: ALERT_KINDS.map((kind) => ({ kind, label: ALERT_KIND_LABELS[kind], email: emailWanted(stored, kind) })),
    ...mailModes(stored),
  }
}

export async function saveAlertPrefs(db: Knex, actor: Actor, input: AlertPrefs): Promise<AlertPrefsView> {
  await db.transaction(async (trx) => {
    const row = await trx('users').where('id', actor.id).forUpdate().first('alert_prefs')
    const before = json<{ email?: Record<string, boolean>; digest?: boolean; immediate?: boolean }>(row?.alert_prefs, {})
    const after = {
      ...before,
      email: { ...(before.email ?? {}), ...(input.email ?? {}) },
      ...(input.digest === undefined ? {} : { digest: input.digest }),
      ...(input.immediate === undefined ? {} : { immediate: input.immediate }),
    }
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
    .select('id', 'alert_id', 'kind', 'to_address', 'subject', 'state', 'attempts', 'next_attempt_at', 'last_error', 'sent_at', 'created_at')
  if (q.state) qb.where('state', q.state)
  const [rows, counts] = await Promise.all([qb, db('mail_outbox').groupBy('state').select('state').count({ n: '*' })])
  return {
    counts: Object.fromEntries(['pending', 'sent', 'failed'].map((s) => [s, Number(counts.find((c: any) => c.state === s)?.n ?? 0)])),
    mails: rows.map((r: any) => ({
      id: Number(r.id),
      alertId: r.alert_id === null ? null : Number(r.alert_id),
      kind: r.kind,
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
