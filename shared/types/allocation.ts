import type { AllocationInput, PlanCheck, ProposedPlan, SolveOutcome } from '../domain/allocation/types'

export interface AllocationWeekDto {
  weekStart: string
  /** the workshop's rebuilds that week */
  capacity: number
  /** taken by other teams' accepted plans */
  bookedElsewhere: number
  /** left for this team's plan */
  available: number
}

export interface AllocationEventDto {
  id: number
  name: string
  series: string
  startsAt: string
  endsAt: string
  rebuildLeadDays: number
  /** the event's default running per engine, a starting point for an entry */
  plannedSeconds: number | null
}

export interface AllocationDto {
  team: { id: number; name: string }
  /** teams the actor may plan for (a supplier or an admin chooses one) */
  teams: { id: number; name: string }[]
  /** coming events of the team's series, entered or not */
  events: AllocationEventDto[]
  input: AllocationInput
  weeks: AllocationWeekDto[]
  /** engines of the team left out of the plan, and why */
  excluded: { serial: string; reason: string }[]
  /** what the event plans say today, matched to the entries by car */
  current: ProposedPlan
  currentCheck: PlanCheck
}

export interface AllocationSolveDto {
  outcome: SolveOutcome
  check: PlanCheck | null
}
