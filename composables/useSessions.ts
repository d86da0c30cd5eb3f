import type { EngineSummaryDto, EngineTypeDto, EventDto, SessionDto, SessionViewDto } from '#shared/types/fleet'

/** One logged session with its analysis, and reading its kept raw file again. */
export async function useSession(id: Ref<string>) {
  const session = await useFetch<SessionViewDto>(() => `/api/sessions/${id.value}`, { key: `session-${id.value}` })

  async function reprocess() {
    await $fetch(`/api/sessions/${id.value}/reprocess`, { method: 'POST' })
    await session.refresh()
  }

  return { data: session.data, error: session.error, refresh: session.refresh, reprocess }
}

/** What a session entered by hand is chosen from (engines, their types, events), and storing one. */
export async function useSessionEntry() {
  const [engines, engineTypes, events] = await Promise.all([
    useFetch<EngineSummaryDto[]>('/api/engines', { key: 'engines', default: () => [] }),
    useFetch<EngineTypeDto[]>('/api/engine-types', { key: 'engine-types', default: () => [] }),
    useFetch<EventDto[]>('/api/events', { key: 'events', default: () => [] }),
  ])

  async function createSession(body: Record<string, unknown>) {
    return $fetch<SessionDto>('/api/sessions', { method: 'POST', body })
  }

  return { engines: engines.data, enginesError: engines.error, engineTypes: engineTypes.data, events: events.data, createSession }
}
