import type { AllocationDto, AllocationSolveDto } from '#shared/types/allocation'
import type { PlanAssignment, PlanRebuild } from '#shared/domain/allocation'

/** A team's engine allocation: its entries, engines and workshop weeks; proposing, accepting, entering. */
export async function useAllocation(teamId: Ref<number | null>) {
  const query = computed(() => (teamId.value ? { teamId: teamId.value } : {}))
  const data = await useFetch<AllocationDto>('/api/allocation', { key: computed(() => `allocation-${teamId.value ?? 'own'}`), query })
  const team = () => (teamId.value ? { teamId: teamId.value } : {})

  async function propose(): Promise<AllocationSolveDto> {
    return $fetch<AllocationSolveDto>('/api/allocation/solve', { method: 'POST', body: team() })
  }
  async function accept(assignments: PlanAssignment[], rebuilds: PlanRebuild[]) {
    const answer = await $fetch<{ accepted: number; rebuilds: number }>('/api/allocation/accept', { method: 'POST', body: { ...team(), assignments, rebuilds } })
    await data.refresh()
    return answer
  }
  async function saveEntries(eventId: number, entries: { chassis: string; plannedSeconds: number }[]) {
    await $fetch('/api/allocation/entries', { method: 'PUT', body: { ...team(), eventId, entries } })
    await data.refresh()
  }
  async function setWorkshopWeek(weekStart: string, rebuilds: number) {
    await $fetch('/api/allocation/workshop-week', { method: 'PUT', body: { weekStart, rebuilds } })
    await data.refresh()
  }

  return { allocation: data.data, error: data.error, status: data.status, refresh: data.refresh, propose, accept, saveEntries, setWorkshopWeek }
}
