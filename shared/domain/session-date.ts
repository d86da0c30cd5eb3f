// Whether a session's start fits the event it is filed under. Pure: the caller hands in `now`.
//
// Thresholds are common practice, not a published rule: a team's test or shakedown the day before an
// event, and logger clocks kept in local time (up to 14 h from UTC), put genuine sessions up to a day
// outside the event's dates; a few days outside is unusual but possible (a test at the circuit in the
// week before), so it needs a person to confirm; weeks away is a session filed under the wrong event.

const HOUR_MS = 3_600_000
const DAY_MS = 24 * HOUR_MS
/** Within this of the event's dates a session needs no confirmation. */
export const EVENT_GRACE_MS = DAY_MS
/** Beyond this from the event's dates a session cannot belong to it. */
export const EVENT_REFUSE_MS = 7 * DAY_MS
/** Clock skew allowed before a start counts as in the future. */
export const FUTURE_SLACK_MS = HOUR_MS

export interface EventDates {
  name: string
  startsAt: string
  endsAt: string
}

export type SessionDateVerdict =
  | { verdict: 'ok' }
  | { verdict: 'confirm'; message: string; daysOutside: number }
  | { verdict: 'refuse'; message: string }

const day = (ms: number) => new Date(ms).toISOString().slice(0, 10)

/** How far `at` lies outside [startsAt, endsAt], in ms (0 inside); negative before, positive after. */
export function outsideEvent(atMs: number, ev: EventDates): number {
  const from = Date.parse(ev.startsAt)
  const to = Date.parse(ev.endsAt)
  if (atMs < from) return atMs - from
  if (atMs > to) return atMs - to
  return 0
}

export function checkSessionDate(startedAt: string, event: EventDates | null, now: Date): SessionDateVerdict {
  const at = Date.parse(startedAt)
  if (at > now.getTime() + FUTURE_SLACK_MS) {
    return { verdict: 'refuse', message: `startedAt: ${startedAt} is in the future; a session is logged after it ran` }
  }
  if (!event) return { verdict: 'ok' }
  const off = outsideEvent(at, event)
  const distance = Math.abs(off)
  if (distance <= EVENT_GRACE_MS) return { verdict: 'ok' }
  const days = Math.round((distance / DAY_MS) * 10) / 10
  const side = off < 0 ? 'before' : 'after'
  const dates = `${day(Date.parse(event.startsAt))} to ${day(Date.parse(event.endsAt))}`
  if (distance > EVENT_REFUSE_MS) {
    return {
      verdict: 'refuse',
      message: `startedAt: ${day(at)} is ${days} days ${side} ${event.name} (${dates}); a session that far from an event's dates cannot belong to it: file it under the event it ran at, or with no event`,
    }
  }
  return {
    verdict: 'confirm',
    daysOutside: days,
    message: `startedAt: ${day(at)} is ${days} days ${side} ${event.name} (${dates}); check the date and the event, and confirm (confirmDate) to file it anyway`,
  }
}
