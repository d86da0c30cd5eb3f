import type { MySessionsDto } from '#shared/types/actor'

/** The signed-in person's own sign-in sessions, and ending all of them. */
export async function useMySessions() {
  const sessions = await useFetch<MySessionsDto>('/api/me/sessions', { key: 'my-sessions' })
  const actor = useActorStore()

  async function signOutEverywhere() {
    await $fetch('/api/me/sessions', { method: 'DELETE' })
    actor.actor = null
  }

  return { data: sessions.data, error: sessions.error, refresh: sessions.refresh, signOutEverywhere }
}
