// The allocation as a mixed-integer model in CPLEX LP text, and the solver's answer read back.
// Pure: the server hands the text to the solver and the columns back here.
//
// Variables, engine i, event k (date order), entry j:
//   x_i_j  binary  engine i runs entry j
//   y_i_k  binary  engine i is rebuilt in the workshop slot before event k
//   u_i_k  hours   life used since the engine's last rebuild, after event k, measured so that the
//                  warning level sits at the engine's fresh headroom F_i (the present build starts
//                  at F_i - headroom, so "u <= F_i" is "no part reaches its warning level")
//   z_i_k  hours   hours left to the warning level after event k when engine i ran it (0 otherwise)
// Objective: the least summed leftover (the engine whose life fits the running most tightly),
// ties broken by fewer rebuilds (a rebuild weighs 0.01 h), then by the tighter fit at the earlier
// event (each event's leftover weighs 1e-5 more than the next one's, far below either).
import { blockedByRebuild, capacityOf, eventsInOrder, hoursOf, mayRun, rebuildWeek, slotOpen, startHeadroom } from './calendar'
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
  const entriesOf = (eventId: number) => input.entries.filter((e) => e.eventId === eventId)
  const columns: BuiltModel['columns'] = new Map()
  const elastic: BuiltModel['elastic'] = new Map()
  const obj: [number, string][] = []
  const rows: string[] = []
  const bounds: string[] = ['zero = 0']
  const binaries: string[] = []
  const entryIndex = new Map(input.entries.map((e, j) => [e.id, j]))
  const eventById = new Map(events.map((e) => [e.id, e]))

  // x columns: only where the engine may run the event and a fresh build could carry the entry.
  const x = (i: number, j: number) => `x_${i}_${j}`
  const xs = new Map<string, boolean>()
  input.engines.forEach((eng, i) => {
    for (const entry of input.entries) {
      if (!mayRun(eng, entry.eventId) || hoursOf(entry.plannedSeconds) > eng.freshHeadroomHours + 1e-9) continue
      const name = x(i, entryIndex.get(entry.id)!)
      xs.set(name, true)
      columns.set(name, { kind: 'x', engineId: eng.id, entryId: entry.id })
      binaries.push(name)
    }
  })
  const xOf = (i: number, entryId: number) => (xs.has(x(i, entryIndex.get(entryId)!)) ? x(i, entryIndex.get(entryId)!) : null)

  // Each entry gets exactly one engine.
  for (const entry of input.entries) {
    const j = entryIndex.get(entry.id)!
    const terms: [number, string][] = input.engines.map((_, i) => xOf(i, entry.id)).filter((v): v is string => v !== null).map((v) => [1, v])
    if (diagnose) {
      const s = `sf_${j}`
      terms.push([1, s])
      obj.push([COST_UNFILLED, s])
      const ev = eventById.get(entry.eventId)
      elastic.set(s, { kind: 'unfilled', entryId: entry.id, eventId: entry.eventId, message: `No engine can run ${entry.chassis} at ${ev?.name ?? 'its event'} (${n(hoursOf(entry.plannedSeconds))} h planned): every engine of the series is on another entry, short of life before its warning level, or cannot be rebuilt in time` })
    }
    rows.push(` fill_${j}: ${sum(terms)} = 1`)
  }

  const weekRebuilds = new Map<string, string[]>()
  input.engines.forEach((eng, i) => {
    const F = eng.freshHeadroomHours
    let prevU: string | null = null
    const offset = F - startHeadroom(eng)
    events.forEach((ev, k) => {
      if (!mayRun(eng, ev.id)) return
      const run: [number, string][] = entriesOf(ev.id).map((e) => [hoursOf(e.plannedSeconds), xOf(i, e.id)] as [number, string | null]).filter((t): t is [number, string] => t[1] !== null)
      const ran: [number, string][] = run.map(([, v]) => [1, v])
      // At most one entry per engine and event.
      if (ran.length > 1) rows.push(` one_${i}_${k}: ${sum(ran)} <= 1`)
      const u = `u_${i}_${k}`
      const y = `y_${i}_${k}`
      const open = slotOpen(ev, input.now)
      const hasY = open || diagnose
      if (hasY) {
        binaries.push(y)
        columns.set(y, { kind: 'y', engineId: eng.id, eventId: ev.id })
        obj.push([diagnose ? 0 : REBUILD_WEIGHT, y])
        const week = rebuildWeek(ev)
        weekRebuilds.set(week, [...(weekRebuilds.get(week) ?? []), y])
        if (!open) {
          const s = `sp_${i}_${k}`
          rows.push(` past_${i}_${k}: ${y} - ${s} <= 0`)
          obj.push([COST_LEAD, s])
          elastic.set(s, { kind: 'lead-time', engineId: eng.id, eventId: ev.id, message: `${eng.serial} would need a rebuild before ${ev.name}, but the workshop's slot for it (${ev.rebuildLeadDays} days ahead) has already opened` })
        }
        // A rebuild before k rules out the earlier events that end after its slot opens.
        for (const m of blockedByRebuild(events, ev)) {
          const mRan = entriesOf(m.id).map((e) => xOf(i, e.id)).filter((v): v is string => v !== null)
          if (!mRan.length) continue
          const terms: [number, string][] = [...mRan.map((v) => [1, v] as [number, string]), [1, y]]
          if (diagnose) {
            const s = `sl_${i}_${k}_${m.id}`
            terms.push([-1, s])
            obj.push([COST_LEAD, s])
            elastic.set(s, { kind: 'lead-time', engineId: eng.id, eventId: ev.id, message: `${eng.serial} cannot both run ${m.name} and be in the workshop ${ev.rebuildLeadDays} days before ${ev.name} for its rebuild` })
          }
          rows.push(` lead_${i}_${k}_${m.id}: ${sum(terms)} <= 1`)
        }
      }
      const yTerm: [number, string][] = hasY ? [[F, y]] : []
      const negRun = run.map(([c, v]) => [-c, v] as [number, string])
      // u_k = (1 - y_k) u_{k-1} + run_k, written as four linear rows (exact for binary y).
      const prev: [number, string][] = prevU ? [[-1, prevU]] : []
      const prevConst = prevU ? 0 : offset
      rows.push(` ua_${i}_${k}: ${sum([[1, u], ...prev, ...negRun, ...yTerm])} >= ${n(prevConst)}`)
      rows.push(` ub_${i}_${k}: ${sum([[1, u], ...negRun])} >= 0`)
      rows.push(` uc_${i}_${k}: ${sum([[1, u], ...prev, ...negRun])} <= ${n(prevConst)}`)
      if (hasY) rows.push(` ud_${i}_${k}: ${sum([[1, u], ...negRun, ...yTerm])} <= ${n(F)}`)
      bounds.push(`0 <= ${u} <= ${n(F)}`)
      if (!diagnose && ran.length) {
        const z = `z_${i}_${k}`
        rows.push(` sl_${i}_${k}: ${sum([[1, z], [1, u], ...ran.map(([, v]) => [-F, v] as [number, string])])} >= 0`)
        obj.push([1 + EARLIER_WEIGHT * (events.length - 1 - k), z])
      }
      prevU = u
    })
  })

  // The workshop's rebuilds per week.
  for (const [week, ys] of [...weekRebuilds.entries()].sort()) {
    const cap = capacityOf(input, week)
    const terms: [number, string][] = ys.map((v) => [1, v])
    if (diagnose) {
      const s = `sc_${week.replaceAll('-', '')}`
      terms.push([-1, s])
      obj.push([COST_CAPACITY, s])
      elastic.set(s, { kind: 'capacity', weekStart: week, message: `The workshop can take ${cap} rebuild${cap === 1 ? '' : 's'} in the week of ${week}; the entries need more` })
    }
    rows.push(` cap_${week.replaceAll('-', '')}: ${sum(terms)} <= ${cap}`)
  }

  const lp = ['Minimize', ` obj: ${sum(obj)}`, 'Subject To', ...rows, 'Bounds', ...bounds.map((b) => ` ${b}`), ...(binaries.length ? ['Binaries', ` ${binaries.join(' ')}`] : []), 'End', ''].join('\n')
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
  if (answer.status !== 'Infeasible') return { status: 'error', message: `The solver stopped without a plan (${answer.status})` }
  const diag = buildAllocationModel(input, { diagnose: true })
  const d = await solveLp(diag.lp)
  if (d.status !== 'Optimal') return { status: 'error', message: `The diagnosis of the infeasible plan stopped (${d.status})` }
  const unmet = readUnmet(diag, d.values)
  return { status: 'infeasible', unmet: unmet.length ? unmet : [{ kind: 'unfilled', message: 'The entries cannot all be filled with the engines available' }] }
}
