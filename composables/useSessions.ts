import type { EngineSummaryDto, EngineTypeDto, EventDto, SessionDto, SessionListDto, SessionViewDto } from '#shared/types/fleet'

/** One logged session with its analysis, and reading its kept raw file again. */
export async function useSession(id: Ref<string>) {
  const session = await useFetch<SessionViewDto>(() => `/api/sessions/${id.value}`, { key: `session-${id.value}` })

  async function reprocess() {
    await $fetch(`/api/sessions/${id.value}/reprocess`, { method: 'POST' })
    await session.refresh()
  }

  /** Voiding or restoring moves life everywhere: the board and engine pages read afresh when next opened. */
  async function voidSession(reason: string) {
    await $fetch(`/api/sessions/${id.value}/void`, { method: 'POST', body: { reason } })
    await session.refresh()
  }

  async function restoreSession(reason: string) {
    await $fetch(`/api/sessions/${id.value}/restore`, { method: 'POST', body: { reason } })
    await session.refresh()
  }

  return { data: session.data, error: session.error, refresh: session.refresh, reprocess, voidSession, restoreSession }
}

/** The sessions list under the given filters (see SessionListQuerySchema). */
export async function useSessionList(query: Ref<Record<string, string | number>>) {
  const list = await useFetch<SessionListDto>('/api/sessions', { key: 'session-list', query })
  return { data: list.data, status: list.status, error: list.error, refresh: list.refresh }
}

/** What the sessions list filters by: the engines and events the actor may see. */
export async function useSessionFilterChoices() {
  const [engines, events] = await Promise.all([
    useFetch<EngineSummaryDto[]>('/api/engines', { key: 'engines', default: () => [] }),
    useFetch<EventDto[]>('/api/events', { key: 'events', default: () => [] }),
  ])
  return { engines: engines.data, events: events.data }
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
