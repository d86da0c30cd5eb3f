// A plan checked against the same rules the model keeps: every entry one engine, one entry per
// engine and event, no engine reaching its warning level during an event, a rebuild only in a slot
// that is still open and not while the engine runs, and the workshop's rebuilds per week.
// Used for the solver's plan (with its reasons) and for a plan changed by hand (with violations).
import {
  blockedByRebuild,
  capacityOf,
  eventsInOrder,
  fmtDay,
  fmtHours,
  hoursOf,
  mayRun,
  rebuildWeek,
  slotOpen,
  slotStart,
  startHeadroom,
} from './calendar'
import type { AllocationInput, ImpliedRebuild, PlanAssignment, PlanCheck, PlanRebuild, PlanRow, Violation } from './types'

const EPS = 1e-6

/**
 * Walks the events in date order. Rebuilds come from `rebuilds` (the solver's choice); where a
 * hand-made plan asks an engine to run more than it has left, a rebuild in the slot before that
 * event is implied, and reported as a violation when the slot has opened or the engine is busy.
 */
export function checkPlan(input: AllocationInput, plan: { assignments: PlanAssignment[]; rebuilds?: PlanRebuild[] }): PlanCheck {
  const events = eventsInOrder(input.events)
  const engineById = new Map(input.engines.map((e) => [e.id, e]))
  const entryById = new Map(input.entries.map((e) => [e.id, e]))
  const violations: Violation[] = []
  const byEntry = new Map<number, number[]>()
  for (const a of plan.assignments) {
    if (!entryById.has(a.entryId)) continue
    byEntry.set(a.entryId, [...(byEntry.get(a.entryId) ?? []), a.engineId])
  }
  const chosen = new Set((plan.rebuilds ?? []).map((r) => `${r.engineId}:${r.beforeEventId}`))
  const headroom = new Map(input.engines.map((e) => [e.id, startHeadroom(e)]))
  const fresh = new Map<number, boolean>()
  const ranAt = new Map<number, number[]>()
  const rebuilds: ImpliedRebuild[] = []
  const rows: PlanRow[] = []
  let leftoverHours = 0

  for (const ev of events) {
    const entries = input.entries.filter((e) => e.eventId === ev.id).sort((a, b) => a.chassis.localeCompare(b.chassis) || a.id - b.id)
    const engineEntries = new Map<number, number[]>()
    for (const entry of entries) for (const id of byEntry.get(entry.id) ?? []) engineEntries.set(id, [...(engineEntries.get(id) ?? []), entry.id])
    for (const [engineId, list] of engineEntries) {
      if (list.length > 1) {
        const eng = engineById.get(engineId)
        violations.push({ kind: 'double', engineId, eventId: ev.id, message: `${eng?.serial ?? `Engine ${engineId}`} is on ${list.length} entries at ${ev.name}; an engine runs one car per event` })
      }
    }
    // Rebuilds before this event: chosen ones, then those the entries imply.
    const rebuildHere = (engineId: number) => {
      const eng = engineById.get(engineId)!
      if (!slotOpen(ev, input.now)) {
        violations.push({ kind: 'lead-time', engineId, eventId: ev.id, message: `${eng.serial} needs a rebuild before ${ev.name}, but its workshop slot opened on ${fmtDay(slotStart(ev))} (${ev.rebuildLeadDays} days ahead) and has passed` })
      }
      for (const m of blockedByRebuild(events, ev)) {
        if ((ranAt.get(engineId) ?? []).includes(m.id)) {
          violations.push({ kind: 'lead-time', engineId, eventId: ev.id, message: `${eng.serial} runs ${m.name} and would have to be in the workshop from ${fmtDay(slotStart(ev))} for its rebuild before ${ev.name}` })
        }
      }
      headroom.set(engineId, eng.freshHeadroomHours)
      fresh.set(engineId, true)
      rebuilds.push({ engineId, beforeEventId: ev.id, serial: eng.serial, eventName: ev.name, slotStart: new Date(slotStart(ev)).toISOString(), weekStart: rebuildWeek(ev) })
    }
    for (const eng of input.engines) if (chosen.has(`${eng.id}:${ev.id}`)) rebuildHere(eng.id)

    for (const entry of entries) {
      const hours = hoursOf(entry.plannedSeconds)
      const ids = byEntry.get(entry.id) ?? []
      const engineId = ids[0] ?? null
      const eng = engineId !== null ? engineById.get(engineId) : undefined
      if (engineId === null || !eng) {
        if (engineId !== null) violations.push({ kind: 'not-eligible', entryId: entry.id, eventId: ev.id, engineId, message: `Engine ${engineId} is not one of the engines this plan can use` })
        else violations.push({ kind: 'unfilled', entryId: entry.id, eventId: ev.id, message: `${entry.chassis} at ${ev.name} has no engine` })
        rows.push({ entryId: entry.id, eventId: ev.id, chassis: entry.chassis, plannedHours: hours, engineId: null, serial: null, rebuiltBefore: false, headroomBefore: null, headroomAfter: null, governing: null, reason: 'No engine chosen' })
        continue
      }
      if (ids.length > 1) violations.push({ kind: 'double', entryId: entry.id, eventId: ev.id, message: `${entry.chassis} at ${ev.name} has ${ids.length} engines; one car runs one engine` })
      if (!mayRun(eng, ev.id)) {
        violations.push({ kind: 'not-eligible', entryId: entry.id, eventId: ev.id, engineId: eng.id, message: `${eng.serial} cannot run ${ev.name}: it is not an engine of that event's series` })
      }
      const wasRebuilt = rebuilds.some((r) => r.engineId === eng.id && r.beforeEventId === ev.id)
      // No rebuild inside an event: an engine put on a second car here is reported as it runs.
      const ranHere = (ranAt.get(eng.id) ?? []).includes(ev.id)
      if (!wasRebuilt && !ranHere && hours > (headroom.get(eng.id) ?? 0) + EPS && hours <= eng.freshHeadroomHours + EPS) rebuildHere(eng.id)
      const rebuiltBefore = rebuilds.some((r) => r.engineId === eng.id && r.beforeEventId === ev.id)
      const before = headroom.get(eng.id) ?? 0
      const after = before - hours
      if (after < -EPS) {
        violations.push({ kind: 'life', entryId: entry.id, eventId: ev.id, engineId: eng.id, message: `${eng.serial} would reach its warning level during ${ev.name}: ${fmtHours(hours)} planned, ${fmtHours(before)} left${rebuiltBefore ? ' even after a rebuild' : ''} (${(fresh.get(eng.id) ? eng.freshGoverning : eng.governing) ?? 'life'})` })
      }
      headroom.set(eng.id, after)
      ranAt.set(eng.id, [...(ranAt.get(eng.id) ?? []), ev.id])
      leftoverHours += Math.max(0, after)
      const governing = (fresh.get(eng.id) ? eng.freshGoverning : eng.governing) ?? null
      rows.push({
        entryId: entry.id,
        eventId: ev.id,
        chassis: entry.chassis,
        plannedHours: hours,
        engineId: eng.id,
        serial: eng.serial,
        rebuiltBefore,
        headroomBefore: before,
        headroomAfter: after,
        governing,
        reason: '',
      })
    }
  }

  // Workshop capacity per week.
  const perWeek = new Map<string, number>()
  for (const r of rebuilds) perWeek.set(r.weekStart, (perWeek.get(r.weekStart) ?? 0) + 1)
  for (const [week, count] of [...perWeek.entries()].sort()) {
    const cap = capacityOf(input, week)
    if (count > cap) violations.push({ kind: 'capacity', weekStart: week, message: `The week of ${week} needs ${count} rebuild${count === 1 ? '' : 's'}; the workshop can take ${cap}` })
  }

  explain(input, rows, headroomTimeline(input, rows))
  return { rows, rebuilds, violations, leftoverHours }
}

/** Each engine's hours to the warning level as each event starts, as the plan leaves them. */
function headroomTimeline(input: AllocationInput, rows: PlanRow[]) {
  const at = new Map<string, number>()
  const events = eventsInOrder(input.events)
  for (const eng of input.engines) {
    let h = startHeadroom(eng)
    for (const ev of events) {
      const row = rows.find((r) => r.eventId === ev.id && r.engineId === eng.id)
      if (row && row.headroomBefore !== null) h = row.headroomBefore
      at.set(`${eng.id}:${ev.id}`, h)
      if (row && row.headroomAfter !== null) h = row.headroomAfter
    }
  }
  return at
}

/** Why each engine: its headroom against the running, and how the other free engines would have fitted. */
function explain(input: AllocationInput, rows: PlanRow[], at: Map<string, number>) {
  const order = new Map(eventsInOrder(input.events).map((e, k) => [e.id, k]))
  for (const row of rows) {
    if (row.engineId === null || row.headroomBefore === null || row.headroomAfter === null) continue
    const busy = new Set(rows.filter((r) => r.eventId === row.eventId && r.engineId !== null).map((r) => r.engineId))
    const others = input.engines
      .filter((e) => e.id !== row.engineId && !busy.has(e.id) && mayRun(e, row.eventId))
      .map((e) => ({ serial: e.serial, left: (at.get(`${e.id}:${row.eventId}`) ?? 0) - row.plannedHours }))
      .filter((o) => o.left >= -EPS)
      .sort((a, b) => a.left - b.left)
    const base = `${row.rebuiltBefore ? 'Rebuilt before this event: ' : ''}${fmtHours(row.headroomBefore)} to its warning level${row.governing ? ` (${row.governing})` : ''}, ${fmtHours(row.plannedHours)} planned, leaves ${fmtHours(Math.max(0, row.headroomAfter))}.`
    let alt: string
    if (!others.length) alt = ' No other free engine could run it without a rebuild.'
    else if (others[0]!.left >= row.headroomAfter - EPS) alt = ` Tightest fit: the next free engine, ${others[0]!.serial}, would leave ${fmtHours(others[0]!.left)}.`
    else {
      const later = rows.find((r) => r.serial === others[0]!.serial && (order.get(r.eventId) ?? 0) > (order.get(row.eventId) ?? 0))
      alt = ` ${others[0]!.serial} would fit tighter here (leaves ${fmtHours(others[0]!.left)})${later ? '; its life is kept for a later event' : ''}.`
    }
    row.reason = row.headroomAfter < -EPS ? base : base + alt
  }
}
