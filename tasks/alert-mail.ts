// The e-mail for one alert: subject, HTML and plain text. Pure: no I/O.
import type { AlertDetails } from '#shared/schemas/alerts'

export const SAFETY_CAUTION =
  'These figures are an aid to the supplier\'s service instructions, inspection and licensed practice, never a substitute for them. ' +
  'Before an engine runs again, follow the service instructions and have the parts inspected.'

export interface AlertMail {
  subject: string
  html: string
  text: string
}

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

export const percent = (fraction: number) => `${Math.round(fraction * 100)} %`

const fmt = (v: number) => (Math.abs(v) >= 100 ? v.toFixed(0) : Math.abs(v) >= 10 ? v.toFixed(1) : v.toFixed(2))

export function renderAlertMail(title: string, d: AlertDetails, engineId: number, publicUrl: string): AlertMail {
  const link = `${publicUrl.replace(/\/+$/, '')}/engines/${engineId}`
  const rows: [string, string][] = [
    ['Engine', `${d.engineSerial} (${d.engineTypeCode})${d.teamName ? `, ${d.teamName}` : ''}`],
  ]
  if (d.partSerial) rows.push(['Part', `${d.partName ?? 'Part'} ${d.partSerial}${d.position ? `, ${d.position}` : ''}`])
  rows.push(['Status', d.status])
  if (d.governing) rows.push(['Governing limit', `${d.governing.label}: ${fmt(d.governing.used)} of ${fmt(d.governing.limit)} ${d.governing.unit}`])
  if (d.fraction !== null) rows.push(['Life consumed', percent(d.fraction)])
  if (d.event) rows.push(['Forecast event', `${d.event.name}${d.event.startsAt ? ` (${d.event.startsAt.slice(0, 10)})` : ''}`])

  const text = [
    d.message,
    '',
    ...rows.map(([k, v]) => `${k}: ${v}`),
    '',
    `Open the engine: ${link}`,
    '',
    SAFETY_CAUTION,
    '',
    'You receive this because you are named for this engine in Crankledger; choose which alerts reach you by e-mail under Settings > Alerts.',
  ].join('\n')

  const html = `<!doctype html><html><body style="font-family:Arial,Helvetica,sans-serif;color:#1d1f21;font-size:14px">
<p>${escapeHtml(d.message)}</p>
<table cellpadding="4" style="border-collapse:collapse">
${rows.map(([k, v]) => `<tr><th align="left" style="border-bottom:1px solid #ccc;padding-right:16px">${escapeHtml(k)}</th><td style="border-bottom:1px solid #ccc">${escapeHtml(v)}</td></tr>`).join('\n')}
</table>
<p><a href="${escapeHtml(link)}">Open ${escapeHtml(d.engineSerial)} in Crankledger</a></p>
<p style="border-left:3px solid #b45309;padding-left:8px"><strong>Caution.</strong> ${escapeHtml(SAFETY_CAUTION)}</p>
<p style="color:#666;font-size:12px">You receive this because you are named for this engine in Crankledger; choose which alerts reach you by e-mail under Settings &gt; Alerts.</p>
</body></html>`

  return { subject: `[Crankledger] ${title}`, html, text }
}
