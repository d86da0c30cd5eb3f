import type { AlertDto, AlertKind } from '#shared/schemas/alerts'

/** Alerts in one state (open, acknowledged or all), and their acknowledgement. */
export async function useAlerts(state: Ref<'open' | 'acknowledged' | 'all'>) {
  const alerts = await useFetch<AlertDto[]>('/api/alerts', { key: 'alerts', query: { state }, default: () => [] })

  async function acknowledge(alertId: number, comment: string) {
    await $fetch(`/api/alerts/${alertId}/ack`, { method: 'POST', body: { comment } })
    await alerts.refresh()
  }

  return { alerts: alerts.data, error: alerts.error, refresh: alerts.refresh, acknowledge }
}

export interface AlertPrefs { receivesEmail: boolean; kinds: { kind: AlertKind; label: string; email: boolean }[] }

/** Which alert kinds the signed-in person receives by e-mail. */
export async function useAlertPrefs() {
  const prefs = await useFetch<AlertPrefs>('/api/me/alert-prefs', { key: 'alert-prefs' })

  async function save(email: Partial<Record<AlertKind, boolean>>) {
    await $fetch('/api/me/alert-prefs', { method: 'PUT', body: { email } })
    await prefs.refresh()
  }

  return { prefs: prefs.data, error: prefs.error, refresh: prefs.refresh, save }
}
