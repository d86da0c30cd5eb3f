// An engine that goes into teardown (or back to the supplier) cannot run its coming events: its
// assignments are taken off, and the team's managers are told once, as one in-app alert with its
// e-mails through the outbox (their alert e-mail preferences apply).
import type { Knex } from 'knex'
import { ALERT_CAUSE_LABELS, emailWanted } from '#shared/schemas/alerts'
import type { Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { iso, json } from '../utils/db'

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

export interface PlanReleaseContext {
  /** why the engine cannot run, in words: "went into teardown" */
  because: string
  /** unique per occasion, so the same release never alerts twice */
  occasion: string
  engineTypeCode: string
  publicUrl: string
}

export async function releaseComingPlans(trx: Knex.Transaction, actor: Actor, engine: any, ctx: PlanReleaseContext) {
  const now = new Date()
  const plans = await trx('event_plans as p').join('events as ev', 'ev.id', 'p.event_id').where('p.engine_id', engine.id).where('ev.ends_at', '>', now).orderBy('ev.starts_at').select('p.*', 'ev.name as event_name', 'ev.starts_at')
  if (!plans.length) return { released: 0, alertId: null }
  await trx('event_plans').whereIn('id', plans.map((p) => p.id)).delete()
  for (const p of plans) {
    const { event_name: _n, starts_at: _s, ...row } = p
    await audit(trx, actor, { entity: 'event_plan', entityId: `${p.event_id}:${engine.id}`, action: 'release', before: row, after: { because: ctx.because } })
  }
  const alertId = engine.team_id ? await tellTeamManagers(trx, engine, plans, ctx, now) : null
  return { released: plans.length, alertId }
}

async function tellTeamManagers(trx: Knex.Transaction, engine: any, plans: any[], ctx: PlanReleaseContext, now: Date) {
  const events = plans.map((p) => ({ eventId: p.event_id as number, name: p.event_name as string, startsAt: iso(p.starts_at), chassis: (p.chassis as string | null) ?? null }))
  const list = events.map((e) => `${e.name} (${e.startsAt?.slice(0, 10)}${e.chassis ? `, car ${e.chassis}` : ''})`)
  const title = `${engine.serial} ${ctx.because}: taken off ${events.length === 1 ? 'its coming event' : `${events.length} coming events`}`
  const message = `${engine.serial} ${ctx.because} and cannot run until it is rebuilt and signed off. Its assignment${events.length === 1 ? ' was' : 's were'} removed from: ${list.join('; ')}. Choose another engine for ${events.length === 1 ? 'that event' : 'those events'} on the calendar.`
  const [id] = await trx('alerts').insert({
    alert_key: `plan-released:${engine.id}:${ctx.occasion}`,
    kind: 'plan-released',
    level: 'planning',
    cause: 'planning',
    cause_label: ALERT_CAUSE_LABELS.planning,
    group_key: `plan-released:${engine.id}:${ctx.occasion}`,
    updated_at: now,
    engine_id: engine.id,
    component_id: null,
    supplier_id: engine.supplier_id,
    team_id: engine.team_id,
    title: title.slice(0, 300),
    // The alert details' usual shape (read by the alerts page), with the released events beside it.
    details: JSON.stringify({ engineSerial: engine.serial, engineTypeCode: ctx.engineTypeCode, teamName: null, partSerial: null, partName: null, position: null, status: 'planning', fraction: null, governing: null, event: events[0] ? { eventId: events[0].eventId, name: events[0].name, startsAt: events[0].startsAt } : null, message, events }),
    created_at: now,
  })
  const alertId = Number(id)
  const managers = await trx('users').where({ organisation_id: engine.team_id, role: 'team_manager', active: true }).orderBy('id').select('id', 'email', 'alert_prefs')
  const link = `${ctx.publicUrl.replace(/\/+$/, '')}/events`
  const text = `${message}\n\nOpen the calendar: ${link}\n`
  const html = `<p>${escapeHtml(message)}</p><p><a href="${escapeHtml(link)}">Open the calendar</a></p>`
  for (const u of managers) {
    const byEmail = emailWanted(json(u.alert_prefs, null), 'plan-released')
    let outboxId: number | null = null
    if (byEmail) {
      const [oid] = await trx('mail_outbox').insert({ alert_id: alertId, user_id: u.id, to_address: u.email, subject: `Crankledger: ${title}`.slice(0, 300), html, text, state: 'pending', attempts: 0, next_attempt_at: now, created_at: now })
      outboxId = Number(oid)
    }
    await trx('alert_recipients').insert({ alert_id: alertId, user_id: u.id, by_email: byEmail, outbox_id: outboxId })
  }
  return alertId
}
