import type { EngineSummaryDto, EventDto } from '#shared/types/fleet'

/** Events with their engine plans, the engines with their forecasts, and assigning engines to events. */
export async function useEventPlanning() {
  const [events, engines] = await Promise.all([
    useFetch<EventDto[]>('/api/events', { key: 'events', default: () => [] }),
    // The engines list carries the forecast for every coming event (the board looks only a few ahead).
    useFetch<EngineSummaryDto[]>('/api/engines', { key: 'calendar-engines', default: () => [] }),
  ])
  const refresh = async () => {
    await Promise.all([events.refresh(), engines.refresh()])
  }

  async function savePlan(eventId: number, engineId: number, body: { chassis: string | null; plannedSeconds: number | null; plannedKm: number | null }) {
    await $fetch(`/api/events/${eventId}/plans/${engineId}`, { method: 'PUT', body })
    await refresh()
  }
  async function removePlan(eventId: number, engineId: number) {
    await $fetch(`/api/events/${eventId}/plans/${engineId}`, { method: 'DELETE' })
    await refresh()
  }

  return {
    events: events.data, eventsStatus: events.status, eventsError: events.error, refreshEvents: events.refresh,
    engines: engines.data, enginesError: engines.error, refreshEngines: engines.refresh,
    refresh, savePlan, removePlan,
  }
}
