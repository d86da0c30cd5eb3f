// Storing findings as one alert per engine and cause, and queueing their mail, exactly once:
// - a finding (one part, kind, level and life cycle) is recorded once: alert_parts.item_key is unique;
// - the parts of one engine, cause and level join the group's open (unacknowledged) alert, or start a new one;
// - each person who wants it gets a notice per alert change, which is queued into one digest per
//   person and one urgent mail per person and engine; a notice moves from pending to queued in the
//   same transaction that writes its mail, so a crash between the two leaves it for the next run.
import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import { ALERT_MAIL_ROLES, deliveryWanted, type AlertDetails, type AlertKind } from '#shared/schemas/alerts'
import { alertGroupKey, describeAlertGroup, orderParts } from '#shared/domain/alert-groups'
import { renderDigestMail, renderUrgentMail, type AlertMail, type MailAlert } from './alert-mail'

export interface FindingGroup {
  engineId: number
  kind: AlertKind
  level: string
  cause: string
  causeLabel: string
  items: { key: string; componentId: number | null; title: string; details: AlertDetails }[]
}

interface Ctx {
  runId: number | null
  now: Date
}

class AlreadyRecorded extends Error {}

const isDuplicate = (e: any) => e?.code === 'ER_DUP_ENTRY' || e instanceof AlreadyRecorded
const isRetryable = (e: any) => e?.code === 'ER_LOCK_DEADLOCK' || e?.code === 'ER_LOCK_WAIT_TIMEOUT'
const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)

async function withRetry<T>(work: () => Promise<T>): Promise<T> {
  for (let attempt = 1; ; attempt++) {
    try {
      return await work()
    } catch (e) {
      // Two runs at the same moment: the loser of a lock conflict tries again and finds the work done.
      if (!isRetryable(e) || attempt >= 3) throw e
    }
  }
}

/** The people an engine's alerts reach by e-mail: the supplier's engineers and the running team's managers. */
async function recipients(trx: Knex.Transaction, owner: { supplierId: number; teamId: number | null }) {
  return trx('users')
    .where('active', true)
    .where((q) => {
      q.where((s) => s.where('organisation_id', owner.supplierId).where('role', ALERT_MAIL_ROLES[0]))
      if (owner.teamId !== null) q.orWhere((s) => s.where('organisation_id', owner.teamId).where('role', ALERT_MAIL_ROLES[1]))
    })
    .orderBy('id')
    .select('id', 'alert_prefs')
}

/**
 * Records one group's new findings in one transaction. Answers 'none' when every finding is known:
 * a second (or concurrent) run with the same findings is a no-op.
 */
export async function recordGroup(
  db: Knex,
  g: FindingGroup,
  owner: { supplierId: number; teamId: number | null },
  ctx: Ctx,
): Promise<{ change: 'new' | 'added' | 'none'; notices: number }> {
  const items = [...g.items].sort((a, b) => a.key.localeCompare(b.key))
  try {
    return await withRetry(() =>
      db.transaction(async (trx) => {
        const known = new Set(await trx('alert_parts').whereIn('item_key', items.map((i) => i.key)).pluck('item_key'))
        const fresh = items.filter((i) => !known.has(i.key))
        if (!fresh.length) return { change: 'none' as const, notices: 0 }
        const groupKey = alertGroupKey(g.engineId, g.cause, g.level)
        const open = await trx('alerts as a')
          .where('a.group_key', groupKey)
          .whereNotExists(trx('alert_acks').whereRaw('alert_acks.alert_id = a.id'))
          .orderBy('a.id', 'desc')
          .first('a.id', 'a.created_at')
        const first = fresh[0]!
        let alertId: number
        if (open) {
          alertId = Number(open.id)
        } else {
          const [id] = await trx('alerts').insert({
            // Derived from the group and its first finding: two runs starting the same alert collide here.
            alert_key: `g:${createHash('sha1').update(`${groupKey}|${first.key}`).digest('hex')}`,
            kind: g.kind,
            level: g.level,
            cause: g.cause.slice(0, 80),
            cause_label: g.causeLabel.slice(0, 120),
            group_key: groupKey,
            engine_id: g.engineId,
            component_id: null,
            supplier_id: owner.supplierId,
            team_id: owner.teamId,
            title: first.title.slice(0, 300),
            details: JSON.stringify(first.details),
            task_run_id: ctx.runId,
            created_at: ctx.now,
            updated_at: ctx.now,
          })
          alertId = Number(id)
        }
        for (const i of fresh) {
          await trx('alert_parts').insert({ alert_id: alertId, item_key: i.key, component_id: i.componentId, details: JSON.stringify(i.details), task_run_id: ctx.runId, created_at: ctx.now })
        }
        // The alert's words are those of all its parts, old and new.
        const all = (await trx('alert_parts').where('alert_id', alertId).orderBy('id').select('component_id', 'details')).map((r: any) => ({ componentId: r.component_id, d: parse(r.details) as AlertDetails }))
        const words = describeAlertGroup(
          { kind: g.kind, level: g.level, engineSerial: first.details.engineSerial, causeLabel: g.causeLabel, single: { title: first.title, message: first.details.message } },
          all.map(({ d }) => ({ serial: d.partSerial, name: d.partName, position: d.position, fraction: d.fraction, governingLabel: d.governing?.label ?? null })),
        )
        const worst = all.reduce<number | null>((w, { d }) => (d.fraction === null ? w : Math.max(w ?? 0, d.fraction)), null)
        const partIds = all.map((p) => p.componentId).filter((x) => x !== null)
        await trx('alerts').where('id', alertId).update({
          title: words.title.slice(0, 300),
          details: JSON.stringify({ ...first.details, ...(partIds.length > 1 ? { partSerial: null, partName: null, position: null, governing: null } : {}), fraction: worst, message: words.message }),
          component_id: partIds.length === 1 ? partIds[0] : null,
          updated_at: ctx.now,
        })

        const change = open ? ('added' as const) : ('new' as const)
        let notices = 0
        for (const u of await recipients(trx, owner)) {
          const wanted = deliveryWanted(parse(u.alert_prefs), g.kind, g.level)
          await trx('alert_recipients').insert({ alert_id: alertId, user_id: u.id, by_email: wanted.digest || wanted.immediate, outbox_id: null }).onConflict().ignore()
          if (!wanted.digest && !wanted.immediate) continue
          await trx('alert_notices').insert({
            alert_id: alertId,
            user_id: u.id,
            task_run_id: ctx.runId,
            change,
            parts_added: fresh.filter((i) => i.componentId !== null).length,
            digest_state: wanted.digest ? 'pending' : 'off',
            immediate_state: wanted.immediate ? 'pending' : 'off',
            created_at: ctx.now,
          })
          notices++
        }
        return { change, notices }
      }),
    )
  } catch (e) {
    if (isDuplicate(e)) return { change: 'none', notices: 0 }
    throw e
  }
}

async function mailAlerts(db: Knex, notices: any[]): Promise<Map<number, MailAlert>> {
  const ids = [...new Set(notices.map((n) => Number(n.alert_id)))]
  const [alerts, parts] = await Promise.all([
    db('alerts').whereIn('id', ids).select('id', 'engine_id', 'level', 'title', 'details'),
    db('alert_parts').whereIn('alert_id', ids).orderBy('id').select('alert_id', 'component_id', 'details'),
  ])
  const out = new Map<number, MailAlert>()
  for (const a of alerts) {
    const d = parse(a.details) as AlertDetails
    const own = parts
      .filter((p: any) => Number(p.alert_id) === Number(a.id) && p.component_id !== null)
      .map((p: any) => parse(p.details) as AlertDetails)
      .map((p) => ({ serial: p.partSerial, name: p.partName, position: p.position, fraction: p.fraction, governing: p.governing }))
    out.set(Number(a.id), {
      alertId: Number(a.id), engineId: a.engine_id, engineSerial: d.engineSerial, teamName: d.teamName, level: a.level, title: a.title,
      message: d.message, event: d.event, change: 'new', partsAdded: 0, parts: orderParts(own),
    })
  }
  return out
}

/** One mail for a set of pending notices, written with the notices' move to queued; nothing when another run took them. */
async function queueOne(db: Knex, which: 'digest' | 'immediate', user: { id: number; email: string }, notices: any[], mail: AlertMail, now: Date): Promise<boolean> {
  try {
    return await withRetry(() =>
      db.transaction(async (trx) => {
        const [oid] = await trx('mail_outbox').insert({
          alert_id: notices.length === 1 ? notices[0].alert_id : null,
          user_id: user.id,
          to_address: user.email,
          kind: which === 'digest' ? 'digest' : 'urgent',
          subject: mail.subject.slice(0, 300),
          html: mail.html,
          text: mail.text,
          state: 'pending',
          attempts: 0,
          next_attempt_at: now,
          created_at: now,
        })
        const moved = await trx('alert_notices')
          .whereIn('id', notices.map((n) => n.id))
          .where(`${which}_state`, 'pending')
          .update({ [`${which}_state`]: 'queued', [`${which}_outbox_id`]: oid })
        if (moved !== notices.length) throw new AlreadyRecorded()
        return true
      }),
    )
  } catch (e) {
    if (e instanceof AlreadyRecorded) return false
    throw e
  }
}

/** Turns pending notices (from this run or one that stopped early) into mails: urgent ones per person and engine, then one digest per person. */
export async function queueAlertMail(db: Knex, ctx: { now: Date; publicUrl: string }): Promise<number> {
  let queued = 0
  for (const which of ['immediate', 'digest'] as const) {
    const pending = await db('alert_notices as n')
      .join('users as u', 'u.id', 'n.user_id')
      .join('alerts as a', 'a.id', 'n.alert_id')
      .where(`n.${which}_state`, 'pending')
      .where('u.active', true)
      .orderBy('n.id')
      .select('n.id', 'n.alert_id', 'n.user_id', 'n.change', 'n.parts_added', 'u.email', 'a.engine_id')
    if (!pending.length) continue
    const alerts = await mailAlerts(db, pending)
    const batches = new Map<string, any[]>()
    for (const n of pending) {
      const key = which === 'digest' ? `${n.user_id}` : `${n.user_id}:${n.engine_id}`
      batches.set(key, [...(batches.get(key) ?? []), n])
    }
    for (const notices of batches.values()) {
      // One entry per alert: several changes to it since the last mail read as one.
      const entries = new Map<number, MailAlert>()
      for (const n of notices) {
        const a = alerts.get(Number(n.alert_id))!
        const seen = entries.get(a.alertId)
        entries.set(a.alertId, {
          ...a,
          change: seen?.change === 'new' || n.change === 'new' ? 'new' : 'added',
          partsAdded: (seen?.partsAdded ?? 0) + n.parts_added,
        })
      }
      const list = [...entries.values()]
      const mail = which === 'digest' ? renderDigestMail(list, ctx.publicUrl) : renderUrgentMail(list, ctx.publicUrl)
      if (await queueOne(db, which, { id: notices[0].user_id, email: notices[0].email }, notices, mail, ctx.now)) queued++
    }
  }
  return queued
}
