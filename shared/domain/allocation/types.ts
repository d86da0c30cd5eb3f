// Engines allocated to a team's coming events: the data the model is built from and the plan it gives.
// Life is counted in running hours "to the warning level": how long an engine can still run at its
// recent duty before its first part reaches its warning level (a projection, an aid to planning).

export interface AllocEvent {
  id: number
  name: string
  startsAt: string
  endsAt: string
  /** days the workshop needs an engine before this event to rebuild it for the event */
  rebuildLeadDays: number
}

/** A car entered in an event, with the running planned for its engine over the event. */
export interface AllocEntry {
  id: number
  eventId: number
  chassis: string
  plannedSeconds: number
}

export interface AllocEngine {
  id: number
  serial: string
  /** running hours left before a part reaches its warning level on the present build (0: due now) */
  headroomHours: number
  /** what sets that headroom, e.g. "conrod 2 RD-4011: eq. h" */
  governing: string | null
  /** running hours to the warning level after a rebuild that renews the life-limited parts */
  freshHeadroomHours: number
  freshGoverning: string | null
  /** event ids this engine may run (its series); absent means every event of the input */
  eventIds?: number[]
}

export interface AllocationInput {
  now: string
  events: AllocEvent[]
  entries: AllocEntry[]
  engines: AllocEngine[]
  /** rebuilds the workshop can still take for this team, by the Monday (YYYY-MM-DD, UTC) of each week */
  capacity: Record<string, number>
}

export interface PlanAssignment {
  entryId: number
  engineId: number
}

export interface PlanRebuild {
  engineId: number
  /** the engine is rebuilt before this event, in the workshop's slot for it */
  beforeEventId: number
}

export interface ProposedPlan {
  assignments: PlanAssignment[]
  rebuilds: PlanRebuild[]
}

export type ViolationKind = 'unfilled' | 'double' | 'not-eligible' | 'life' | 'lead-time' | 'capacity'

export interface Violation {
  kind: ViolationKind
  message: string
  entryId?: number
  eventId?: number
  engineId?: number
  weekStart?: string
}

export interface PlanRow {
  entryId: number
  eventId: number
  chassis: string
  plannedHours: number
  engineId: number | null
  serial: string | null
  rebuiltBefore: boolean
  /** hours to the warning level when the event starts, and when it ends */
  headroomBefore: number | null
  headroomAfter: number | null
  governing: string | null
  reason: string
}

export interface ImpliedRebuild extends PlanRebuild {
  serial: string
  eventName: string
  /** the day the engine must be in the workshop (event start less the lead time) */
  slotStart: string
  weekStart: string
}

export interface PlanCheck {
  rows: PlanRow[]
  rebuilds: ImpliedRebuild[]
  violations: Violation[]
  /** summed hours left to the warning level after each run (smaller: life used more tightly) */
  leftoverHours: number
}

/** A constraint the solver could not meet, named for the manager. */
export interface Unmet {
  kind: 'unfilled' | 'capacity' | 'lead-time'
  message: string
  entryId?: number
  eventId?: number
  engineId?: number
  weekStart?: string
}

export type SolveOutcome =
  | { status: 'optimal'; plan: ProposedPlan; objective: number }
  /** the best plan the solver found within its time limit, every rule met but not proven the best */
  | { status: 'feasible'; plan: ProposedPlan; objective: number }
  | { status: 'infeasible'; unmet: Unmet[] }
  | { status: 'error'; message: string }
