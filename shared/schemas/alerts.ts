import { z } from 'zod'
import { multiline } from '../text'

// What a finding is about; each kind can be switched on or off for e-mail per user (in-app alerts always show).
export const ALERT_KINDS = ['life-warning', 'life-due', 'life-over', 'forecast', 'over-rev', 'oil-caution', 'oil-critical', 'plan-released'] as const
export type AlertKind = (typeof ALERT_KINDS)[number]

export const ALERT_KIND_LABELS: Record<AlertKind, string> = {
  'life-warning': 'Part at its warning level (plan the rebuild)',
  'life-due': 'Part at its rebuild-due level',
  'life-over': 'Part at its life limit (must not run)',
  forecast: 'Forecast to reach a limit at the next assigned event',
  'over-rev': 'Over-rev demanding an immediate inspection',
  'oil-caution': 'Oil analysis at caution',
  'oil-critical': 'Oil analysis critical',
  'plan-released': 'Engine taken off its coming events (teardown or back to the supplier)',
}

/** The families of causes an alert can have: a part group's threshold, an over-rev verdict, a forecast, an oil sample. */
export const ALERT_CAUSES = ['life', 'over-rev', 'forecast', 'oil', 'planning'] as const
export type AlertCause = (typeof ALERT_CAUSES)[number]
export const ALERT_CAUSE_LABELS: Record<AlertCause, string> = { life: 'Part life', 'over-rev': 'Over-rev', forecast: 'Forecast', oil: 'Oil analysis', planning: 'Event plan' }
export const KINDS_OF_CAUSE: Record<AlertCause, AlertKind[]> = {
  life: ['life-warning', 'life-due', 'life-over'],
  'over-rev': ['over-rev'],
  forecast: ['forecast'],
  oil: ['oil-caution', 'oil-critical'],
  planning: ['plan-released'],
}
export const causeOfKind = (kind: AlertKind): AlertCause => ALERT_CAUSES.find((c) => KINDS_OF_CAUSE[c].includes(kind))!

/**
 * Levels from the most to the least severe. "Do not run" and "inspect now" are urgent: they are
 * mailed at once as well as in the digest.
 */
export const ALERT_LEVELS = ['over', 'inspection', 'critical', 'due', 'forecast', 'warning', 'caution', 'planning'] as const
export type AlertLevel = (typeof ALERT_LEVELS)[number]
export const ALERT_LEVEL_INFO: Record<AlertLevel, { label: string; urgent: boolean }> = {
  over: { label: 'Do not run', urgent: true },
  inspection: { label: 'Inspect now', urgent: true },
  critical: { label: 'Inspect now (oil)', urgent: true },
  due: { label: 'Rebuild due', urgent: false },
  forecast: { label: 'Forecast', urgent: false },
  warning: { label: 'Warning', urgent: false },
  caution: { label: 'Caution (oil)', urgent: false },
  planning: { label: 'Plan changed', urgent: false },
}
/** 0 is the most severe; an unknown level sorts last. */
export function levelRank(level: string): number {
  const i = (ALERT_LEVELS as readonly string[]).indexOf(level)
  return i < 0 ? ALERT_LEVELS.length : i
}
export const isUrgentLevel = (level: string) => ALERT_LEVEL_INFO[level as AlertLevel]?.urgent === true

/** Roles that receive alert e-mails: the supplier's engineers and the running team's managers. */
export const ALERT_MAIL_ROLES = ['supplier_engineer', 'team_manager'] as const

export const AlertPrefsSchema = z
  .object({
    email: z.partialRecord(z.enum(ALERT_KINDS), z.boolean()).optional(),
    /** one digest after each check that changed something */
    digest: z.boolean().optional(),
    /** "do not run" and "inspect now" at once, besides the digest */
    immediate: z.boolean().optional(),
  })
  .strict()
export type AlertPrefs = z.infer<typeof AlertPrefsSchema>

const storedPrefs = (stored: unknown) => (stored && typeof stored === 'object' ? (stored as { email?: Record<string, unknown>; digest?: unknown; immediate?: unknown }) : {})

/** Stored preferences: a kind missing from the JSON is mailed. */
export function emailWanted(stored: unknown, kind: AlertKind): boolean {
  return storedPrefs(stored).email?.[kind] !== false
}

/** Digest and immediate mail are on unless switched off. */
export function mailModes(stored: unknown): { digest: boolean; immediate: boolean } {
  const p = storedPrefs(stored)
  return { digest: p.digest !== false, immediate: p.immediate !== false }
}

/** How a wanted alert reaches one person: in the digest, at once, or both (both on unless switched off). */
export function deliveryWanted(stored: unknown, kind: AlertKind, level: string): { digest: boolean; immediate: boolean } {
  if (!emailWanted(stored, kind)) return { digest: false, immediate: false }
  const m = mailModes(stored)
  return { digest: m.digest, immediate: isUrgentLevel(level) && m.immediate }
}

const ackComment = () => multiline().trim().max(1000, 'must be at most 1000 characters').default('')
export const AlertAckSchema = z.object({ comment: ackComment() }).strict()

export const EngineAlertsAckSchema = z
  .object({
    comment: ackComment(),
    /** Only alerts up to this id: one that arrived after the page was read is not acknowledged unseen. */
    throughId: z.coerce.number().int().positive().optional(),
    /** the page's filters: only the alerts it shows are acknowledged */
    level: z.enum(ALERT_LEVELS).optional(),
    cause: z.enum(ALERT_CAUSES).optional(),
  })
  .strict()

export const EngineIdParams = z.object({ engineId: z.coerce.number().int().positive() })

export const AlertListQuery = z.object({
  state: z.enum(['open', 'acknowledged', 'all']).default('all'),
  engineId: z.coerce.number().int().positive().optional(),
  level: z.enum(ALERT_LEVELS).optional(),
  cause: z.enum(ALERT_CAUSES).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
})
export type AlertListFilter = z.infer<typeof AlertListQuery>

/** What one finding says; for a part, its own figures. */
export interface AlertDetails {
  engineSerial: string
  engineTypeCode: string
  teamName: string | null
  partSerial: string | null
  partName: string | null
  position: string | null
  status: string
  fraction: number | null
  governing: { label: string; used: number; limit: number; unit: string; fraction: number } | null
  event: { eventId: number; name: string; startsAt: string | null } | null
  message: string
}

export interface AlertPartDto {
  componentId: number | null
  serial: string | null
  name: string | null
  position: string | null
  fraction: number | null
  governing: AlertDetails['governing']
  addedAt: string
}

export interface AlertDto {
  id: number
  kind: AlertKind
  cause: AlertCause
  /** what the alert is about in words: the part group, "Over-rev", the event forecast, "Oil" */
  causeLabel: string
  level: string
  title: string
  engineId: number
  teamId: number | null
  createdAt: string
  /** when the last part joined the alert */
  updatedAt: string
  details: AlertDetails
  parts: AlertPartDto[]
  acks: { userId: number; userName: string; at: string; comment: string }[]
  acknowledged: boolean
}

/** The alerts of one engine, most severe first. */
export interface EngineAlertsDto {
  engineId: number
  engineSerial: string
  teamName: string | null
  open: number
  worstLevel: string
  latestAt: string
  alerts: AlertDto[]
}
