import type { PartTypeEvidenceDto } from '#shared/types/evidence'

/** One part type's field evidence in one life measure, and the supplier engineer's classification of its findings. */
export async function useEvidence(componentTypeId: Ref<number | null>, measure: Ref<string>) {
  const evidence = await useFetch<PartTypeEvidenceDto | null>(() => `/api/component-types/${componentTypeId.value}/evidence?measure=${encodeURIComponent(measure.value)}`, {
    key: () => `evidence-${componentTypeId.value}-${measure.value}`,
    immediate: componentTypeId.value !== null,
    default: () => null,
  })

  async function classifyFinding(findingId: number, failureMode: string | null) {
    await $fetch(`/api/findings/${findingId}/failure-mode`, { method: 'PUT', body: { failureMode } })
    await evidence.refresh()
  }

  return { evidence: evidence.data, error: evidence.error, pending: evidence.pending, refresh: evidence.refresh, classifyFinding }
}
