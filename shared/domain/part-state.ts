// What state a part leaves an engine in, and the limits that apply to one serial after a concession.
import type { ComponentLimits } from './life'

export const REMOVAL_STATES = ['serviceable', 'quarantined', 'scrapped'] as const
export type RemovalState = (typeof REMOVAL_STATES)[number]

export interface RemovalFacts {
  /** the teardown finding's disposition for this part, if one was recorded */
  findingDisposition: string | null
  /** an over-rev verdict on the engine not yet cleared by inspection */
  engineInspectionOpen: boolean
  /** the part's own immediate-inspection flag */
  partInspectionOpen: boolean
  /** the part's largest limit ratio (1 = at its limit) */
  fraction: number
}

export interface RemovalSuggestion {
  state: RemovalState
  reasons: string[]
}

/**
 * The state a removed part should go to unless the mechanic says otherwise. Common practice: a part
 * that saw an uncleared over-rev, or reached a limit, is held until someone has inspected it.
 */
export function suggestRemovalState(f: RemovalFacts): RemovalSuggestion {
  if (f.findingDisposition === 'scrap') return { state: 'scrapped', reasons: ['the teardown finding says scrap'] }
  const reasons: string[] = []
  if (f.findingDisposition === 'quarantine' || f.findingDisposition === 'send-to-lab') reasons.push(`the teardown finding says ${f.findingDisposition}`)
  if (f.partInspectionOpen) reasons.push('an over-rev calls for inspection of this part')
  else if (f.engineInspectionOpen) reasons.push('the engine has an over-rev verdict not yet cleared by inspection')
  if (f.fraction >= 1) reasons.push(`the part is at ${Math.round(f.fraction * 100)} % of a limit`)
  return { state: reasons.length ? 'quarantined' : 'serviceable', reasons }
}

/** Limits given to one serial by a concession; a field left out keeps the type's limit. */
export interface SerialLimits {
  hours?: number
  km?: number
  eqHours?: number
  /** band id -> allowed events */
  overRevEvents?: Record<string, number>
}

/** A later concession's limits replace the earlier ones field by field (over-rev bands band by band). */
export function mergeSerialLimits(current: SerialLimits | null, next: SerialLimits): SerialLimits {
  const merged: SerialLimits = { ...(current ?? {}) }
  if (next.hours !== undefined) merged.hours = next.hours
  if (next.km !== undefined) merged.km = next.km
  if (next.eqHours !== undefined) merged.eqHours = next.eqHours
  if (next.overRevEvents) merged.overRevEvents = { ...(current?.overRevEvents ?? {}), ...next.overRevEvents }
  return merged
}

export function withSerialLimits(limits: ComponentLimits, serial: SerialLimits | null | undefined): ComponentLimits {
  if (!serial) return limits
  return {
    ...limits,
    hours: serial.hours ?? limits.hours,
    km: serial.km ?? limits.km,
    eqHours: serial.eqHours ?? limits.eqHours,
    overRevEvents: { ...limits.overRevEvents, ...(serial.overRevEvents ?? {}) },
  }
}

export function hasSerialLimits(s: SerialLimits | null | undefined): boolean {
  return Boolean(s && (s.hours !== undefined || s.km !== undefined || s.eqHours !== undefined || Object.keys(s.overRevEvents ?? {}).length))
}
