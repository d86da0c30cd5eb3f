// The alert e-mails: one digest per recipient and check run, and one urgent message per engine for
// "do not run" and "inspect now". Subject, HTML and plain text. Pure: no I/O.
import { ALERT_LEVEL_INFO, levelRank, type AlertDetails, type AlertLevel } from '#shared/schemas/alerts'
import { percentText } from '#shared/domain/alert-groups'

export const SAFETY_CAUTION =
  'These figures are an aid to the supplier\'s service instructions, inspection and licensed practice, never a substitute for them. ' +
  'Before an engine runs again, follow the service instructions and have the parts inspected.'

const WHY = 'You receive this because you are named for these engines in Crankledger; choose what reaches you by e-mail under Settings > Alerts.'

export interface AlertMail {
  subject: string
  html: string
  text: string
}

/** One alert as a mail shows it: what changed in this run, and the parts it now lists. */
export interface MailAlert {
  alertId: number
  engineId: number
  engineSerial: string
  teamName: string | null
  level: string
  title: string
  message: string
  change: 'new' | 'added'
  partsAdded: number
  event: AlertDetails['event']
  parts: { serial: string | null; name: string | null; position: string | null; fraction: number | null; governing: AlertDetails['governing'] }[]
}

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

export const percent = percentText

const fmt = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(0) : Math.abs(v) >= 10 ? v.toFixed(1) : v.toFixed(2))

export const levelWord = (level: string) => ALERT_LEVEL_INFO[level as AlertLevel]?.label ?? level

function partLine(p: MailAlert['parts'][number]): string {
  const bits = [`${p.position ?? p.name ?? 'Part'} ${p.serial ?? ''}`.trim()]
  if (p.fraction !== null) bits.push(`${percent(p.fraction)} consumed`)
  if (p.governing) {
    const n = (v: number) => (p.governing!.unit === 'events' ? String(v) : fmt(v))
    bits.push(`${p.governing.label}: ${n(p.governing.used)} of ${n(p.governing.limit)} ${p.governing.unit}`)
  }
  return bits.join(' – ')
}

const base = (publicUrl: string) => publicUrl.replace(/\/+$/, '')
const engineLink = (publicUrl: string, engineId: number) => `${base(publicUrl)}/engines/${engineId}`
const alertsLink = (publicUrl: string, engineId: number) => `${base(publicUrl)}/alerts?engine=${engineId}`

/** Engines in the order of their most severe alert, each with its alerts most severe first. */
function byEngine(alerts: MailAlert[]): MailAlert[][] {
  const groups = new Map<number, MailAlert[]>()
  for (const a of alerts) groups.set(a.engineId, [...(groups.get(a.engineId) ?? []), a])
  const sorted = [...groups.values()].map((g) => [...g].sort((a, b) => levelRank(a.level) - levelRank(b.level) || b.alertId - a.alertId))
  return sorted.sort((a, b) => levelRank(a[0]!.level) - levelRank(b[0]!.level) || a[0]!.engineSerial.localeCompare(b[0]!.engineSerial))
}

function alertText(a: MailAlert, publicUrl: string): string[] {
  const change = a.change === 'new' ? 'New' : `${a.partsAdded} more part${a.partsAdded === 1 ? '' : 's'}`
  const lines = [`[${levelWord(a.level)}] ${a.title} (${change})`, `  ${a.message}`]
  if (a.event) lines.push(`  Event: ${a.event.name}${a.event.startsAt ? ` (${a.event.startsAt.slice(0, 10)})` : ''}`)
  for (const p of a.parts) lines.push(`  - ${partLine(p)}`)
  lines.push(`  Open: ${alertsLink(publicUrl, a.engineId)}`)
  return lines
}

function alertHtml(a: MailAlert, publicUrl: string): string {
  const change = a.change === 'new' ? 'new' : `${a.partsAdded} more part${a.partsAdded === 1 ? '' : 's'}`
  const urgent = ALERT_LEVEL_INFO[a.level as AlertLevel]?.urgent
  return `<li style="margin:0 0 12px">
<strong style="color:${urgent ? '#b91c1c' : '#92400e'}">${escapeHtml(levelWord(a.level))}</strong> · <a href="${escapeHtml(alertsLink(publicUrl, a.engineId))}">${escapeHtml(a.title)}</a> <span style="color:#666">(${escapeHtml(change)})</span>
<div>${escapeHtml(a.message)}</div>
${a.event ? `<div>Event: ${escapeHtml(a.event.name)}${a.event.startsAt ? ` (${escapeHtml(a.event.startsAt.slice(0, 10))})` : ''}</div>` : ''}
${a.parts.length ? `<ul style="margin:4px 0 0;padding-left:18px">${a.parts.map((p) => `<li>${escapeHtml(partLine(p))}</li>`).join('')}</ul>` : ''}
</li>`
}

function wrapHtml(intro: string, sections: string, footer: string) {
  return `<!doctype html><html><body style="font-family:Arial,Helvetica,sans-serif;color:#1d1f21;font-size:14px">
<p>${intro}</p>
${sections}
<p style="border-left:3px solid #b45309;padding-left:8px"><strong>Caution.</strong> ${escapeHtml(SAFETY_CAUTION)}</p>
<p style="color:#666;font-size:12px">${escapeHtml(footer)}</p>
</body></html>`
}

/** Everything one check run changed for one person, grouped by engine, with links into the app. */
export function renderDigestMail(alerts: MailAlert[], publicUrl: string): AlertMail {
  const engines = byEngine(alerts)
  const names = engines.map((g) => g[0]!.engineSerial)
  const shown = names.length > 3 ? `${names.slice(0, 3).join(', ')} and ${names.length - 3} more` : names.join(', ')
  const subject = `[Crankledger] Alert digest: ${alerts.length} alert${alerts.length === 1 ? '' : 's'} on ${shown}`
  const intro = `The last life check raised or extended ${alerts.length} alert${alerts.length === 1 ? '' : 's'} on ${names.length} engine${names.length === 1 ? '' : 's'}.`
  const text = [
    intro,
    '',
    ...engines.flatMap((g) => [`${g[0]!.engineSerial}${g[0]!.teamName ? ` (${g[0]!.teamName})` : ''} – ${engineLink(publicUrl, g[0]!.engineId)}`, ...g.flatMap((a) => alertText(a, publicUrl)), '']),
    `All alerts: ${base(publicUrl)}/alerts`,
    '',
    SAFETY_CAUTION,
    '',
    WHY,
  ].join('\n')
  const sections = engines
    .map((g) => `<h3 style="margin:16px 0 6px"><a href="${escapeHtml(engineLink(publicUrl, g[0]!.engineId))}">${escapeHtml(g[0]!.engineSerial)}</a>${g[0]!.teamName ? ` <span style="color:#666;font-weight:normal">${escapeHtml(g[0]!.teamName)}</span>` : ''}</h3>
<ul style="padding-left:18px">${g.map((a) => alertHtml(a, publicUrl)).join('\n')}</ul>`)
    .join('\n')
  const html = wrapHtml(escapeHtml(intro), `${sections}\n<p><a href="${escapeHtml(`${base(publicUrl)}/alerts`)}">Open the alerts in Crankledger</a></p>`, WHY)
  return { subject, html, text }
}

/** "Do not run" or "inspect now" on one engine: sent at once, besides the digest. */
export function renderUrgentMail(alerts: MailAlert[], publicUrl: string): AlertMail {
  const sorted = byEngine(alerts)[0]!
  const first = sorted[0]!
  const more = sorted.length - 1
  const subject = `[Crankledger] ${levelWord(first.level).toUpperCase()}: ${first.title}${more ? ` (+${more} more)` : ''}`
  const intro = `${first.engineSerial}: ${sorted.map((a) => levelWord(a.level).toLowerCase()).filter((w, i, all) => all.indexOf(w) === i).join(' and ')}. Act before the engine runs again.`
  const text = [
    intro,
    '',
    ...sorted.flatMap((a) => [...alertText(a, publicUrl), '']),
    `Open the engine: ${engineLink(publicUrl, first.engineId)}`,
    '',
    SAFETY_CAUTION,
    '',
    WHY,
  ].join('\n')
  const html = wrapHtml(
    escapeHtml(intro),
    `<ul style="padding-left:18px">${sorted.map((a) => alertHtml(a, publicUrl)).join('\n')}</ul>\n<p><a href="${escapeHtml(engineLink(publicUrl, first.engineId))}">Open ${escapeHtml(first.engineSerial)} in Crankledger</a></p>`,
    WHY,
  )
  return { subject, html, text }
}
