import type { ComponentTypeDto, EngineTypeDto } from '#shared/types/fleet'
import type { LimitSaveDto } from '#shared/types/limit-preview'
import type { CategoryLevels } from '~/components/engine/EngineBoardRow.vue'

/** Engine types with their design sheets; creating one and changing its loads. */
export async function useEngineTypes() {
  const types = await useFetch<EngineTypeDto[]>('/api/engine-types', { key: 'engine-types', default: () => [] })

  async function createEngineType(body: Record<string, unknown>) {
    await $fetch('/api/engine-types', { method: 'POST', body })
    await types.refresh()
  }
  async function updateEngineType(engineTypeId: number, body: Record<string, unknown>) {
    await $fetch(`/api/engine-types/${engineTypeId}`, { method: 'PATCH', body })
    await types.refresh()
  }
  /** Saves a previewed change of reference speed or bands (409 when the fleet moved since the preview). */
  async function saveEngineTypeLimits(engineTypeId: number, change: Record<string, unknown>, previewToken: string) {
    const saved = await $fetch<LimitSaveDto>(`/api/engine-types/${engineTypeId}/limits`, { method: 'POST', body: { change, previewToken } })
    await types.refresh()
    return saved
  }

  return { engineTypes: types.data, error: types.error, refresh: types.refresh, createEngineType, updateEngineType, saveEngineTypeLimits }
}

/** Part types with their life limits; creating one and changing its limits. */
export async function useComponentTypes() {
  const types = await useFetch<ComponentTypeDto[]>('/api/component-types', { key: 'component-types', default: () => [] })

  async function createComponentType(body: Record<string, unknown>) {
    await $fetch('/api/component-types', { method: 'POST', body })
    await types.refresh()
  }
  async function updateComponentType(componentTypeId: number, body: Record<string, unknown>) {
    await $fetch(`/api/component-types/${componentTypeId}`, { method: 'PATCH', body })
    await types.refresh()
  }
  /** Saves a previewed change of limits, levels or exponent (409 when the fleet moved since the preview). */
  async function saveComponentTypeLimits(componentTypeId: number, change: Record<string, unknown>, previewToken: string) {
    const saved = await $fetch<LimitSaveDto>(`/api/component-types/${componentTypeId}/limits`, { method: 'POST', body: { change, previewToken } })
    await types.refresh()
    return saved
  }

  // Ticks on a group bar: the earliest warning and due level of the part types in that group.
  const levelsByCategory = computed<Record<string, CategoryLevels>>(() => {
    const out: Record<string, CategoryLevels> = {}
    for (const t of types.data.value) {
      const cur = out[t.category]
      out[t.category] = cur ? { warningLevel: Math.min(cur.warningLevel, t.warningLevel), dueLevel: Math.min(cur.dueLevel, t.dueLevel) } : { warningLevel: t.warningLevel, dueLevel: t.dueLevel }
    }
    return out
  })

  return { componentTypes: types.data, levelsByCategory, error: types.error, refresh: types.refresh, createComponentType, updateComponentType, saveComponentTypeLimits }
}
