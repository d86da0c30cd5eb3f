import type { AlertCause, AlertKind, AlertLevel, EngineAlertsDto } from '#shared/schemas/alerts'

export interface AlertFilters {
  state: 'open' | 'acknowledged' | 'all'
  level?: AlertLevel
  cause?: AlertCause
  engineId?: number
}

/** Alerts grouped by engine under the given filters, acknowledgement one by one and per engine. */
export async function useAlerts(filters: Ref<AlertFilters>) {
  const query = computed(() => Object.fromEntries(Object.entries(filters.value).filter(([, v]) => v !== undefined && v !== '')))
  const groups = await useFetch<EngineAlertsDto[]>('/api/alerts/engines', { key: 'alert-groups', query, default: () => [] })

  async function acknowledge(alertId: number, comment: string) {
    await $fetch(`/api/alerts/${alertId}/ack`, { method: 'POST', body: { comment } })
    await groups.refresh()
  }

  /** Every open alert of the engine the page shows (its level and cause filters, up to the newest one shown). */
  async function acknowledgeEngine(engineId: number, comment: string, throughId: number) {
    const { level, cause } = filters.value
    const answer = await $fetch<{ acknowledged: number }>(`/api/alerts/engines/${engineId}/ack`, { method: 'POST', body: { comment, throughId, level, cause } })
    await groups.refresh()
    return answer
  }

  return { groups: groups.data, error: groups.error, pending: groups.pending, refresh: groups.refresh, acknowledge, acknowledgeEngine }
}

export interface AlertPrefs {
  receivesEmail: boolean
  kinds: { kind: AlertKind; label: string; email: boolean }[]
  digest: boolean
  immediate: boolean
}
export interface AlertPrefsInput { email: Partial<Record<AlertKind, boolean>>; digest: boolean; immediate: boolean }

/** Which alerts the signed-in person receives by e-mail, and how (digest, urgent at once). */
export async function useAlertPrefs() {
  const prefs = await useFetch<AlertPrefs>('/api/me/alert-prefs', { key: 'alert-prefs' })

  async function save(input: AlertPrefsInput) {
    await $fetch('/api/me/alert-prefs', { method: 'PUT', body: input })
    await prefs.refresh()
  }

  return { prefs: prefs.data, error: prefs.error, refresh: prefs.refresh, save }
}
