// The calendar facts both the model and the plan check read: event order, the workshop slot
// before each event, which earlier events a rebuild in that slot rules out, and the slot's week.
import type { AllocationInput, AllocEngine, AllocEvent } from './types'

const DAY_MS = 86_400_000

function time(iso: string): number {
  const t = Date.parse(iso)
  if (Number.isNaN(t)) throw new RangeError(`not an ISO date-time: ${iso}`)
  return t
}

export function eventsInOrder(events: AllocEvent[]): AllocEvent[] {
  return [...events].sort((a, b) => time(a.startsAt) - time(b.startsAt) || a.id - b.id)
}

/** The day an engine must reach the workshop to be rebuilt for the event. */
export function slotStart(ev: AllocEvent): number {
  return time(ev.startsAt) - ev.rebuildLeadDays * DAY_MS
}

/** Monday (UTC) of the week the rebuild slot opens in, YYYY-MM-DD: the week whose capacity it takes. */
export function rebuildWeek(ev: AllocEvent): string {
  const d = new Date(slotStart(ev))
  const back = (d.getUTCDay() + 6) % 7
  const monday = new Date(Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate() - back))
  return monday.toISOString().slice(0, 10)
}

/** A rebuild before `ev` can still happen: its slot has not opened before now. */
export function slotOpen(ev: AllocEvent, now: string): boolean {
  return slotStart(ev) >= time(now)
}

/** Earlier events the engine cannot run if it is rebuilt before `ev`: they end after the slot opens. */
export function blockedByRebuild(ordered: AllocEvent[], ev: AllocEvent): AllocEvent[] {
  const slot = slotStart(ev)
  return ordered.filter((m) => time(m.startsAt) < time(ev.startsAt) && time(m.endsAt) > slot)
}

export function mayRun(engine: AllocEngine, eventId: number): boolean {
  return !engine.eventIds || engine.eventIds.includes(eventId)
}

export function hoursOf(seconds: number): number {
  return seconds / 3600
}

/** Headroom the engine starts the plan with, never below zero nor above a fresh build's. */
export function startHeadroom(engine: AllocEngine): number {
  return Math.min(Math.max(0, engine.headroomHours), engine.freshHeadroomHours)
}

export function capacityOf(input: AllocationInput, week: string): number {
  return input.capacity[week] ?? 0
}

export function fmtHours(h: number): string {
  return `${(Math.round(h * 10) / 10).toFixed(1)} h`
}

export function fmtDay(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10)
}
