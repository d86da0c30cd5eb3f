import type { ComponentTypeDto, EngineTypeDto } from '#shared/types/fleet'

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

  return { engineTypes: types.data, error: types.error, refresh: types.refresh, createEngineType, updateEngineType }
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

  return { componentTypes: types.data, error: types.error, refresh: types.refresh, createComponentType, updateComponentType }
}
