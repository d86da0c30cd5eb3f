export interface TeardownRow { id: number; engineId: number; engineSerial: string; teamName: string | null; reason: string; state: string; openedAt: string; openedByName: string; signedAt: string | null; signedByName: string | null; measured: number; outOfTolerance: number; findings: number }
export interface TeardownEngineRow { id: number; serial: string; status: string; teamName: string | null; overRevFlags: { immediateInspection: boolean }; worst: { status: string; fraction: number } }

/** All teardowns the actor may see, the engines one may be started on, and starting one. */
export async function useTeardownList() {
  const [rows, engines] = await Promise.all([
    useFetch<TeardownRow[]>('/api/teardowns', { key: 'teardowns', default: () => [] }),
    useFetch<TeardownEngineRow[]>('/api/engines', { key: 'teardown-engines', default: () => [] }),
  ])

  async function startTeardown(body: Record<string, unknown>) {
    return $fetch<{ id: number }>('/api/teardowns', { method: 'POST', body })
  }

  return { rows: rows.data, engines: engines.data, error: rows.error, refresh: rows.refresh, startTeardown }
}

export interface TeardownFindingBody { condition: string; disposition: string; note: string | null }
export interface TeardownSwapBody { position: string; serial: string; reason: string; overrideReason?: string }

/** One teardown: its sheet, findings, swaps and sign-off; every change reloads it. */
export async function useTeardown(id: Ref<number>) {
  const teardown = await useFetch<any>(() => `/api/teardowns/${id.value}`, { key: `teardown-${id.value}` })
  const base = () => `/api/teardowns/${id.value}`
  const refresh = () => teardown.refresh()

  async function saveMeasurement(componentId: number, key: string, value: number) {
    await $fetch(`${base()}/measurements`, { method: 'PUT', body: { componentId, key, value } })
    await refresh()
  }
  /** Changes the part's finding when it has one, records a new one otherwise. */
  async function saveFinding(componentId: number, findingId: number | null, body: TeardownFindingBody) {
    if (findingId) await $fetch(`${base()}/findings/${findingId}`, { method: 'PATCH', body })
    else await $fetch(`${base()}/findings`, { method: 'POST', body: { componentId, ...body } })
    await refresh()
  }
  async function uploadPhoto(findingId: number, file: File) {
    const body = new FormData()
    body.append('file', file)
    await $fetch(`${base()}/findings/${findingId}/photos`, { method: 'POST', body })
    await refresh()
  }
  async function swapPart(body: TeardownSwapBody) {
    await $fetch(`${base()}/swaps`, { method: 'POST', body })
    await refresh()
  }
  /** submit, reopen or sign-off */
  async function transition(step: 'submit' | 'reopen' | 'sign-off', body: Record<string, unknown> = {}) {
    await $fetch(`${base()}/${step}`, { method: 'POST', body })
    await refresh()
  }

  return { td: teardown.data, error: teardown.error, refresh, saveMeasurement, saveFinding, uploadPhoto, swapPart, transition }
}
