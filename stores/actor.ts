import { defineStore } from 'pinia'
import type { Role } from '#shared/roles'

export interface ActorView {
  id: number
  name: string
  email: string
  role: Role
  organisationId: number
  organisationName: string
  organisationKind: 'supplier' | 'team'
  supplierId: number
}

// The signed-in person and what their role may do; the server enforces, this only hides.
export const useActorStore = defineStore('actor', () => {
  const actor = ref<ActorView | null>(null)

  async function load() {
    const headers = import.meta.server ? useRequestHeaders(['cookie']) : undefined
    try {
      actor.value = await $fetch<ActorView>('/api/me', { headers })
    } catch {
      actor.value = null
    }
    return actor.value
  }

  function can(...roles: Role[]) {
    return actor.value ? roles.includes(actor.value.role) : false
  }

  async function signOut() {
    await $fetch('/api/auth/logout', { method: 'POST' })
    actor.value = null
    await navigateTo('/login')
  }

  return { actor, load, can, signOut }
})
