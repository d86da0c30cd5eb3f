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

/** Roles that receive alert e-mails: the supplier's engineers and the running team's managers. */
export const ALERT_MAIL_ROLES = ['supplier_engineer', 'team_manager'] as const

export const AlertPrefsSchema = z
  .object({ email: z.partialRecord(z.enum(ALERT_KINDS), z.boolean()) })
  .strict()
export type AlertPrefs = z.infer<typeof AlertPrefsSchema>

/** Stored preferences: a kind missing from the JSON is sent by e-mail. */
export function emailWanted(stored: unknown, kind: AlertKind): boolean {
  const prefs = stored && typeof stored === 'object' ? (stored as { email?: Record<string, unknown> }).email : undefined
  return prefs?.[kind] !== false
}

export const AlertAckSchema = z.object({ comment: multiline().trim().max(1000, 'must be at most 1000 characters').default('') }).strict()

export const AlertListQuery = z.object({
  state: z.enum(['open', 'acknowledged', 'all']).default('all'),
  engineId: z.coerce.number().int().positive().optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
})

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

export interface AlertDto {
  id: number
  kind: AlertKind
  level: string
  title: string
  engineId: number
  componentId: number | null
  teamId: number | null
  createdAt: string
  details: AlertDetails
  acks: { userId: number; userName: string; at: string; comment: string }[]
  acknowledged: boolean
}
