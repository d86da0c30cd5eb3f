// The allocation as a mixed-integer model in CPLEX LP text, and the solver's answer read back.
// Pure: the server hands the text to the solver and the columns back here.
//
// Each engine's season is a path of builds: a build covers a run of consecutive events (those of
// the engine's series, in date order), the first one on the present build or after a rebuild,
// every later one after a rebuild in the workshop slot before its first event. Variables, engine i:
//   b_i_a    binary  build period a (events s .. e-1, present build or rebuilt before s) is used
//   x_i_j_a  binary  engine i runs entry j during build period a
//   z_i_a_k  hours   hours left to the warning level after event k when engine i ran it in period a
// A build period's running stays within its hours to the warning level (present or fresh), so no
// engine reaches a warning level during an event. Writing the periods out, rather than tracking
// used life with big-M resets, keeps the relaxation tight: the solver proves optima in moments.
// Objective: the least summed leftover (the engine whose life fits the running most tightly),
// ties broken by fewer rebuilds (a rebuild weighs 0.01 h), then by the tighter fit at the earlier
// event (each event's leftover weighs 1e-5 more than the next one's, far below either), then by
// the later rebuild.
import { blockedByRebuild, capacityOf, eventsInOrder, hoursOf, mayRun, rebuildWeek, slotOpen, startHeadroom } from './calendar'
import { checkPlan } from './check'
import type { AllocationInput, ProposedPlan, SolveOutcome, Unmet } from './types'

export const REBUILD_WEIGHT = 0.01
const EARLIER_WEIGHT = 1e-5
// Elastic costs when diagnosing an infeasible plan: an unfilled entry is the last resort, so the
// diagnosis names the workshop's capacity first, then a lead time, when relaxing either would do.
const COST_UNFILLED = 1000
const COST_CAPACITY = 1
const COST_LEAD = 2

export interface BuiltModel {
  lp: string
  /** which decision each binary column stands for */
  columns: Map<string, { kind: 'x'; engineId: number; entryId: number } | { kind: 'y'; engineId: number; eventId: number }>
  /** which constraint each elastic column relaxes (diagnosis only) */
  elastic: Map<string, Unmet>
}

const n = (v: number) => {
  const r = Math.round(v * 1e6) / 1e6
  return Object.is(r, -0) ? '0' : String(r)
}

function sum(terms: [number, string][]): string {
  const live = terms.filter(([c]) => c !== 0)
  if (!live.length) return 'zero'
  return live
    .map(([c, v], i) => {
      const mag = Math.abs(c) === 1 ? '' : `${n(Math.abs(c))} `
      return i === 0 ? `${c < 0 ? '- ' : ''}${mag}${v}` : `${c < 0 ? '-' : '+'} ${mag}${v}`
    })
    .join(' ')
}

/**
 * The model. With `diagnose`, coverage, workshop capacity and lead times become elastic and the
 * objective is their cost alone: the columns left non-zero name what cannot be met.
 */
export function buildAllocationModel(input: AllocationInput, opts: { diagnose?: boolean } = {}): BuiltModel {
  const diagnose = opts.diagnose === true
  const events = eventsInOrder(input.events)
  const order = new Map(events.map((e, k) => [e.id, k]))
  const entriesOf = (eventId: number) => input.entries.filter((e) => e.eventId === eventId)
  const columns: BuiltModel['columns'] = new Map()
  const elastic: BuiltModel['elastic'] = new Map()
  const obj: [number, string][] = []
  const rows: string[] = []
  const binaries: string[] = []
  const entryIndex = new Map(input.entries.map((e, j) => [e.id, j]))
  const byEntry = new Map<number, string[]>(input.entries.map((e) => [e.id, []]))
  const weekRebuilds = new Map<string, string[]>()

  input.engines.forEach((eng, i) => {
    const own = events.filter((ev) => mayRun(eng, ev.id))
    const nEv = own.length
    if (!nEv) return
    const F = eng.freshHeadroomHours
    const H0 = startHeadroom(eng)
    // Build periods: [s, e) with the present build (s = 0 only) or rebuilt before own[s].
    const periods: { name: string; s: number; e: number; rebuilt: boolean; cap: number }[] = []
    for (let s = 0; s < nEv; s++) {
      for (let e = s + 1; e <= nEv; e++) {
        if (s === 0) periods.push({ name: `b_${i}_p_${e}`, s, e, rebuilt: false, cap: H0 })
        const open = slotOpen(own[s]!, input.now)
        if (open || diagnose) periods.push({ name: `b_${i}_${s}_${e}`, s, e, rebuilt: true, cap: F })
      }
    }
    const xName = (j: number, p: { name: string }) => `x_${p.name.slice(2)}_${j}`
    const xsOf = new Map<string, { j: number; entryId: number; k: number; hours: number }[]>()
    for (const p of periods) {
      binaries.push(p.name)
      const xs: { j: number; entryId: number; k: number; hours: number }[] = []
      for (let k = p.s; k < p.e; k++) {
        for (const entry of entriesOf(own[k]!.id)) {
          const hours = hoursOf(entry.plannedSeconds)
          if (hours > p.cap + 1e-9) continue
          const j = entryIndex.get(entry.id)!
          const name = xName(j, p)
          xs.push({ j, entryId: entry.id, k, hours })
          binaries.push(name)
          columns.set(name, { kind: 'x', engineId: eng.id, entryId: entry.id })
          byEntry.get(entry.id)!.push(name)
        }
      }
      xsOf.set(p.name, xs)
      // At most one entry per event, and only in a period that is used.
      for (let k = p.s; k < p.e; k++) {
        const here = xs.filter((x) => x.k === k)
        if (here.length) rows.push(` one_${p.name.slice(2)}_${k}: ${sum([...here.map((x) => [1, xName(x.j, p)] as [number, string]), [-1, p.name]])} <= 0`)
      }
      // The period's running stays within its hours to the warning level.
      if (xs.length) rows.push(` life_${p.name.slice(2)}: ${sum([...xs.map((x) => [x.hours, xName(x.j, p)] as [number, string]), [-p.cap, p.name]])} <= 0`)
      if (p.rebuilt) {
        const ev = own[p.s]!
        columns.set(p.name, { kind: 'y', engineId: eng.id, eventId: ev.id })
        // A rebuild as late as it can be, just before the engine is needed (a thousandth of its weight per event earlier).
        obj.push([diagnose ? 0 : REBUILD_WEIGHT * (1 + 1e-3 * (nEv - 1 - p.s)), p.name])
        const week = rebuildWeek(ev)
        weekRebuilds.set(week, [...(weekRebuilds.get(week) ?? []), p.name])
        if (!slotOpen(ev, input.now)) {
          obj.push([COST_LEAD, p.name])
          elastic.set(p.name, { kind: 'lead-time', engineId: eng.id, eventId: ev.id, message: `${eng.serial} would need a rebuild before ${ev.name}, but the workshop's slot for it (${ev.rebuildLeadDays} days ahead) has already opened` })
        }
      }
    }
    // One path of build periods through the engine's events.
    for (let t = 0; t <= nEv; t++) {
      const into = periods.filter((p) => p.e === t).map((p) => [1, p.name] as [number, string])
      const out = periods.filter((p) => p.s === t).map((p) => [-1, p.name] as [number, string])
      if (t === 0) rows.push(` path_${i}_0: ${sum(out.map(([, v]) => [1, v] as [number, string]))} = 1`)
      else if (t < nEv) rows.push(` path_${i}_${t}: ${sum([...into, ...out])} = 0`)
    }
    // A rebuild before own[s] rules out the earlier events that end after its slot opens.
    for (let s = 1; s < nEv; s++) {
      const rebuilds = periods.filter((p) => p.rebuilt && p.s === s).map((p) => p.name)
      if (!rebuilds.length) continue
      for (const m of blockedByRebuild(events, own[s]!)) {
        const km = own.findIndex((ev) => ev.id === m.id)
        if (km < 0) continue
        const runs = periods.flatMap((p) => (xsOf.get(p.name) ?? []).filter((x) => x.k === km).map((x) => xName(x.j, p)))
        if (!runs.length) continue
        const terms: [number, string][] = [...runs.map((v) => [1, v] as [number, string]), ...rebuilds.map((v) => [1, v] as [number, string])]
        if (diagnose) {
          const sl = `sl_${i}_${s}_${m.id}`
          terms.push([-1, sl])
          obj.push([COST_LEAD, sl])
          elastic.set(sl, { kind: 'lead-time', engineId: eng.id, eventId: own[s]!.id, message: `${eng.serial} cannot both run ${m.name} and be in the workshop ${own[s]!.rebuildLeadDays} days before ${own[s]!.name} for its rebuild` })
        }
        rows.push(` lead_${i}_${s}_${m.id}: ${sum(terms)} <= 1`)
      }
    }
    // Hours left after event k when the engine ran it in period p: the period's hours less its
    // running so far (one leftover per period keeps the relaxation tight).
    if (!diagnose) {
      for (const p of periods) {
        const xs = xsOf.get(p.name) ?? []
        for (let k = p.s; k < p.e; k++) {
          const terms: [number, string][] = []
          for (const x of xs) {
            if (x.k === k) terms.push([p.cap - x.hours, xName(x.j, p)])
            else if (x.k < k) terms.push([-x.hours, xName(x.j, p)])
          }
          if (!terms.some(([c]) => c > 0)) continue
          const z = `z_${p.name.slice(2)}_${k}`
          rows.push(` left_${p.name.slice(2)}_${k}: ${sum([[1, z], ...terms.map(([c, v]) => [-c, v] as [number, string])])} >= 0`)
          obj.push([1 + EARLIER_WEIGHT * (events.length - 1 - (order.get(own[k]!.id) ?? 0)), z])
        }
      }
    }
  })

  // Each entry gets exactly one engine.
  for (const entry of input.entries) {
    const j = entryIndex.get(entry.id)!
    const terms: [number, string][] = (byEntry.get(entry.id) ?? []).map((v) => [1, v])
    if (diagnose) {
      const sf = `sf_${j}`
      terms.push([1, sf])
      obj.push([COST_UNFILLED, sf])
      const ev = events.find((e) => e.id === entry.eventId)
      elastic.set(sf, { kind: 'unfilled', entryId: entry.id, eventId: entry.eventId, message: `No engine can run ${entry.chassis} at ${ev?.name ?? 'its event'} (${n(hoursOf(entry.plannedSeconds))} h planned): every engine of the series is on another entry, short of life before its warning level, or cannot be rebuilt in time` })
    }
    rows.push(` fill_${j}: ${sum(terms)} = 1`)
  }

  // The workshop's rebuilds per week.
  for (const [week, bs] of [...weekRebuilds.entries()].sort()) {
    const cap = capacityOf(input, week)
    const terms: [number, string][] = bs.map((v) => [1, v])
    if (diagnose) {
      const sc = `sc_${week.replaceAll('-', '')}`
      terms.push([-1, sc])
      obj.push([COST_CAPACITY, sc])
      elastic.set(sc, { kind: 'capacity', weekStart: week, message: `The workshop can take ${cap} rebuild${cap === 1 ? '' : 's'} in the week of ${week}; the entries need more` })
    }
    rows.push(` cap_${week.replaceAll('-', '')}: ${sum(terms)} <= ${cap}`)
  }

  const lp = ['Minimize', ` obj: ${sum(obj)}`, 'Subject To', ...rows, 'Bounds', ' zero = 0', ...(binaries.length ? ['Binaries', ` ${binaries.join(' ')}`] : []), 'End', ''].join('\n')
  return { lp, columns, elastic }
}

/** The solver's columns (name -> value) read back as a plan. */
export function readPlan(model: BuiltModel, values: Record<string, number>): ProposedPlan {
  const plan: ProposedPlan = { assignments: [], rebuilds: [] }
  for (const [name, col] of model.columns) {
    if ((values[name] ?? 0) < 0.5) continue
    if (col.kind === 'x') plan.assignments.push({ entryId: col.entryId, engineId: col.engineId })
    else plan.rebuilds.push({ engineId: col.engineId, beforeEventId: col.eventId })
  }
  plan.assignments.sort((a, b) => a.entryId - b.entryId)
  plan.rebuilds.sort((a, b) => a.beforeEventId - b.beforeEventId || a.engineId - b.engineId)
  return plan
}

/** The relaxed constraints the diagnosis had to use, each named. */
export function readUnmet(model: BuiltModel, values: Record<string, number>): Unmet[] {
  const unmet: Unmet[] = []
  for (const [name, u] of model.elastic) if ((values[name] ?? 0) > 0.5) unmet.push(u)
  const order = { capacity: 0, 'lead-time': 1, unfilled: 2 }
  return unmet.sort((a, b) => order[a.kind] - order[b.kind])
}

/**
 * A plan cut off by the time limit may rebuild an engine events before it runs again; the
 * optimum would not (the later rebuild breaks ties). Each such rebuild is moved to just before
 * the engine's next run wherever the plan then still meets every rule.
 */
export function laterRebuilds(input: AllocationInput, plan: ProposedPlan): ProposedPlan {
  const events = eventsInOrder(input.events)
  const eventOfEntry = new Map(input.entries.map((e) => [e.id, e.eventId]))
  let best = plan
  for (const r of plan.rebuilds) {
    const from = events.findIndex((e) => e.id === r.beforeEventId)
    const next = events.slice(from).find((ev) => best.assignments.some((a) => a.engineId === r.engineId && eventOfEntry.get(a.entryId) === ev.id))
    if (!next || next.id === r.beforeEventId) continue
    const moved = { ...best, rebuilds: best.rebuilds.map((x) => (x === r || (x.engineId === r.engineId && x.beforeEventId === r.beforeEventId) ? { engineId: r.engineId, beforeEventId: next.id } : x)) }
    if (checkPlan(input, moved).violations.length === 0) best = moved
  }
  return best
}

export interface SolverAnswer {
  status: string
  objective?: number
  values: Record<string, number>
}

/**
 * Runs the solve through `solveLp` (the solver call belongs to the caller): the model first, and
 * when that is infeasible the elastic diagnosis, which names the constraints that cannot be met.
 */
export async function solveAllocation(input: AllocationInput, solveLp: (lp: string) => Promise<SolverAnswer> | SolverAnswer): Promise<SolveOutcome> {
  if (!input.entries.length) return { status: 'optimal', plan: { assignments: [], rebuilds: [] }, objective: 0 }
  const model = buildAllocationModel(input)
  const answer = await solveLp(model.lp)
  if (answer.status === 'Optimal') return { status: 'optimal', plan: readPlan(model, answer.values), objective: answer.objective ?? 0 }
  if (answer.status === 'Time limit reached') {
    // Stopped before proving the best: keep its best plan when that plan fills every entry.
    const plan = readPlan(model, answer.values)
    const filled = new Set(plan.assignments.map((a) => a.entryId))
    if (input.entries.every((e) => filled.has(e.id))) return { status: 'feasible', plan: laterRebuilds(input, plan), objective: answer.objective ?? 0 }
    return { status: 'error', message: 'The solver found no plan within its time limit; try fewer events at once' }
  }
  if (answer.status !== 'Infeasible') return { status: 'error', message: `The solver stopped without a plan (${answer.status})` }
  const diag = buildAllocationModel(input, { diagnose: true })
  const d = await solveLp(diag.lp)
  if (d.status !== 'Optimal') return { status: 'error', message: `The diagnosis of the infeasible plan stopped (${d.status})` }
  const unmet = readUnmet(diag, d.values)
  return { status: 'infeasible', unmet: unmet.length ? unmet : [{ kind: 'unfilled', message: 'The entries cannot all be filled with the engines available' }] }
}
