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
export interface TeardownSwapBody { position: string; serial: string; reason: string; overrideReason?: string; removedDisposition?: string }

/** One teardown: its sheet, findings, swaps and sign-off; every change reloads it. */
export async function useTeardown(id: Ref<number>) {
  // Readings go through the browser's outbox: kept when the link drops, sent in the order typed.
  // Set up before the first await, while the component's lifecycle hooks can still be registered.
  const actor = useActorStore()
  const outbox = useReadingOutbox({ scope: () => (actor.actor ? `u${actor.actor.id}:teardown:${id.value}` : null), onSent: () => refresh() })
  const teardown = await useFetch<any>(() => `/api/teardowns/${id.value}`, { key: `teardown-${id.value}` })
  const base = () => `/api/teardowns/${id.value}`
  const refresh = () => teardown.refresh()
  /** Queues one reading; `baseVersion` is the stored reading's version the mechanic saw (0: none). */
  async function saveMeasurement(componentId: number, key: string, value: number, baseVersion: number, label: string) {
    await outbox.queue({ target: `${componentId}:${key}`, label, method: 'PUT', url: `${base()}/measurements`, body: { componentId, key, value, baseVersion } })
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
  /** The supplier marks a finding as the team's doing: its lease contract's damage charge goes on the team's statement. */
  async function chargeFinding(findingId: number, reason: string) {
    await $fetch(`/api/billing/findings/${findingId}/charge`, { method: 'POST', body: { reason } })
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

  return { td: teardown.data, error: teardown.error, refresh, outbox, saveMeasurement, saveFinding, uploadPhoto, chargeFinding, swapPart, transition }
}

/** One teardown as its printable report shows it (read once: the report does not change it). */
export async function useTeardownReport(id: number) {
  const report = await useFetch<any>(`/api/teardowns/${id}`, { key: `teardown-report-${id}` })
  return { td: report.data, error: report.error }
}

export interface TypeFindings { componentTypeId: number; code: string; name: string; limitHours: number | null; findings: number; conditions: { condition: string; count: number; minHours: number; maxHours: number; meanHours: number }[]; dispositions: Record<string, number>; rows: { findingId: number; teardownId: number; engineSerial: string; serial: string; condition: string; disposition: string; note: string | null; hours: number; at: string }[] }

/** Teardown findings across the fleet, per part type. */
export async function useFleetFindings() {
  const findings = await useFetch<TypeFindings[]>('/api/teardowns/findings', { key: 'fleet-findings', default: () => [] })
  return { data: findings.data, error: findings.error, refresh: findings.refresh }
}

interface WearPoint { teardownId: number; engineSerial: string; at: string; hours: number; value: number; verdict: string }
export interface WearChar { key: string; label: string; unit: string; nominal: number; min: number; max: number; points: WearPoint[]; slopePerHour: number | null; intercept: number | null; n: number; towards: 'min' | 'max' | null; hoursLeft: number | null }
export interface PartWear { componentId: number; serial: string; typeName: string; currentHours: number; characteristics: WearChar[]; notice: string }

/** One part's teardown readings over its running hours, with the fitted wear rate. */
export async function usePartWear(partId: MaybeRefOrGetter<number>) {
  const wear = await useFetch<PartWear>(() => `/api/parts/${toValue(partId)}/wear`, { key: `wear-${toValue(partId)}` })
  return { data: wear.data, error: wear.error }
}
