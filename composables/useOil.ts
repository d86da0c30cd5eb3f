import type { OilEngineDto, OilEngineStatusDto, OilImportResult, OilLabMappingDto, OilLimitsDto, OilSampleDto } from '#shared/types/oil'
import type { ReadingOutbox } from './useReadingOutbox'

/** The oil status of every engine the actor may see. */
export async function useOilList() {
  const list = await useFetch<OilEngineStatusDto[]>('/api/oil', { key: 'oil-list', default: () => [] })
  return { engines: list.data, error: list.error, refresh: list.refresh }
}

/** One engine's samples with limits and fleet statistics, and attaching a lab report to a sample. */
export async function useOilEngine(engineId: Ref<number>) {
  const engine = await useFetch<OilEngineDto>(() => `/api/oil/engines/${engineId.value}`, { key: `oil-engine-${engineId.value}` })

  async function uploadReport(sampleId: number, file: File) {
    const form = new FormData()
    form.append('file', file, file.name)
    await $fetch(`/api/oil/samples/${sampleId}/report`, { method: 'POST', body: form })
    await engine.refresh()
  }

  return { data: engine.data, error: engine.error, refresh: engine.refresh, uploadReport }
}

/** One recorded sample, to be corrected (none when a new one is entered). */
export async function useOilSample(sampleId: number | null) {
  const sample = sampleId ? await useFetch<OilSampleDto>(`/api/oil/samples/${sampleId}`, { key: `oil-sample-${sampleId}` }) : null
  return { original: sample ? sample.data : ref<OilSampleDto | null>(null), error: sample ? sample.error : ref(null) }
}

/** Stores a sample: a correction when it has an id, a new one for the engine otherwise. */
export function saveOilSample(sampleId: number | null, engineId: number, body: Record<string, unknown>) {
  if (sampleId) return $fetch<OilSampleDto>(`/api/oil/samples/${sampleId}`, { method: 'PUT', body })
  return $fetch<OilSampleDto>('/api/oil/samples', { method: 'POST', body: { engineId, ...body } })
}

/** Saved column layouts of the labs' files, and importing a lab file (its layout is saved with it). */
export async function useOilImport() {
  const mappings = await useFetch<OilLabMappingDto[]>('/api/oil/mappings', { key: 'oil-mappings', default: () => [] })

  async function importLabFile(body: Record<string, unknown>) {
    const result = await $fetch<OilImportResult>('/api/oil/import', { method: 'POST', body: { ...body, saveMapping: true } })
    await mappings.refresh()
    return result
  }

  return { saved: mappings.data, refresh: mappings.refresh, importLabFile }
}

/** Oil limits of every engine type, and saving one type's. */
export async function useOilLimits() {
  const limits = await useFetch<OilLimitsDto[]>('/api/oil/limits', { key: 'oil-limits', default: () => [] })

  async function saveLimits(engineTypeId: number, body: Record<string, unknown>) {
    await $fetch(`/api/oil/limits/${engineTypeId}`, { method: 'PUT', body })
    await limits.refresh()
  }

  return { types: limits.data, error: limits.error, refresh: limits.refresh, saveLimits }
}

/** Oil samples saved on the form while the link is down: kept in the browser and sent in the order saved. */
export function useOilOutbox() {
  const actor = useActorStore()
  return useReadingOutbox({ scope: () => (actor.actor ? `u${actor.actor.id}:oil` : null) })
}

/** Queues a sample (a correction when it has an id; it carries the version it was read at as `baseVersion`). */
export function queueOilSample(outbox: ReadingOutbox, sampleId: number | null, engineId: number, body: Record<string, unknown>, label: string) {
  if (sampleId) return outbox.queue({ target: `sample:${sampleId}`, label, method: 'PUT', url: `/api/oil/samples/${sampleId}`, body })
  return outbox.queue({ target: `new:${engineId}:${String(body.sampleId)}`, label, method: 'POST', url: '/api/oil/samples', body: { engineId, ...body } })
}
