import type { LifeStatus, LimitMeasure } from '#shared/domain/life'

const dash = '—'

export function fmtPercent(fraction: number | null | undefined, digits = 1): string {
  if (fraction === null || fraction === undefined || !Number.isFinite(fraction)) return dash
  return `${(fraction * 100).toFixed(digits)} %`
}

/** Plain number without unit, for CSV and inputs. */
export function fmtNumber(value: number | null | undefined, digits = 1): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return dash
  return value.toLocaleString('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits })
}

/** Hours as h:mm, the way running time is read off a logger. */
export function fmtHoursHm(hours: number | null | undefined): string {
  if (hours === null || hours === undefined || !Number.isFinite(hours)) return dash
  const totalMin = Math.round(hours * 60)
  const h = Math.floor(totalMin / 60)
  const m = totalMin % 60
  return `${h}:${String(m).padStart(2, '0')}`
}

export function fmtSecondsHm(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined) return dash
  return fmtHoursHm(seconds / 3600)
}

/** Parses "h:mm" or decimal hours into seconds; null when unreadable. */
export function parseHm(text: string): number | null {
  const t = text.trim()
  const m = /^(\d+):([0-5]?\d)$/.exec(t)
  if (m) return Number(m[1]) * 3600 + Number(m[2]) * 60
  if (/^\d+(\.\d+)?$/.test(t)) return Math.round(Number(t) * 3600)
  return null
}

export function fmtDate(iso: string | null | undefined): string {
  if (!iso) return dash
  return new Date(iso).toLocaleDateString('en-GB', { day: '2-digit', month: 'short', year: 'numeric', timeZone: 'UTC' })
}

export function fmtDateTime(iso: string | null | undefined): string {
  if (!iso) return dash
  const d = new Date(iso)
  return `${fmtDate(iso)} ${d.toLocaleTimeString('en-GB', { hour: '2-digit', minute: '2-digit', timeZone: 'UTC' })}`
}

/** Amount with its unit; events are whole, distance to 0.1 km, hours to 0.01 h. */
export function fmtAmountValue(value: number, unit: LimitMeasure['unit'] | string): string {
  return fmtNumber(value, unit === 'events' || unit === 'km' ? 0 : 2)
}

export function fmtAmount(value: number, unit: LimitMeasure['unit'] | string): string {
  return `${fmtAmountValue(value, unit)} ${unit}`
}

export const STATUS_WORD: Record<LifeStatus, string> = {
  ok: 'Within life',
  warning: 'Plan rebuild',
  due: 'Rebuild due',
  over: 'Do not run',
}

export const LOCATION_WORD = {
  car: 'In car',
  shelf: 'On the shelf',
  supplier: 'At the supplier',
  teardown: 'In teardown',
} as const

export function locationText(location: keyof typeof LOCATION_WORD, chassis: string | null): string {
  return location === 'car' && chassis ? `In car ${chassis}` : LOCATION_WORD[location]
}

export const REASON_TEXT = {
  'already-over': 'a part is already at its limit',
  'incomplete-build': 'a position of the build has no part fitted',
  inspection: 'an over-rev calls for inspection first',
  'projected-over': 'a part would reach its limit during the event',
  'no-projection': 'no planned running and no recent duty to project from',
} as const

export function governingText(g: LimitMeasure | null | undefined): string {
  if (!g) return 'no limit set'
  return `${g.label.toLowerCase()}: ${fmtAmount(g.used, g.unit)} of ${fmtAmount(g.limit, g.unit)}`
}

interface ForecastInput {
  worst: { status: LifeStatus }
  nextEvent: { name: string; ok: boolean; reason: keyof typeof REASON_TEXT | null; chassis: string | null } | null
  warningAt: { name: string } | null
  limitAt: { name: string } | null
}

/** The board's one-line answer to "can this engine run what is coming?". */
export function engineForecastText(e: ForecastInput): { main: string; sub: string; tone: LifeStatus | 'muted' } {
  if (e.worst.status === 'over') return { main: 'Must not run', sub: 'A part has reached its limit', tone: 'over' }
  const next = e.nextEvent
  const later = e.limitAt ? (e.worst.status === 'due' ? `Due before ${e.limitAt.name}` : `Limit reached at ${e.limitAt.name}`) : e.warningAt ? `Plan rebuild from ${e.warningAt.name}` : ''
  if (!next) return { main: 'No coming event', sub: later, tone: 'muted' }
  if (next.ok) return { main: `Will finish ${next.name}`, sub: later, tone: e.worst.status === 'ok' ? 'ok' : e.worst.status }
  switch (next.reason) {
    case 'projected-over':
      return { main: `Limit reached at ${next.name}`, sub: 'Rebuild or swap before this event', tone: 'over' }
    case 'incomplete-build':
      return { main: 'Build incomplete', sub: 'A position has no part fitted: must not run', tone: 'over' }
    case 'inspection':
      return { main: `Inspect before ${next.name}`, sub: REASON_TEXT.inspection, tone: 'over' }
    case 'no-projection':
      return { main: `No forecast for ${next.name}`, sub: REASON_TEXT['no-projection'], tone: 'warning' }
    default:
      return { main: 'Must not run', sub: REASON_TEXT['already-over'], tone: 'over' }
  }
}
