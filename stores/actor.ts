import { defineStore } from 'pinia'
import type { Role } from '#shared/roles'
import type { Actor } from '#shared/types/actor'

// The signed-in person and what their role may do; the server enforces, this only hides.
export const useActorStore = defineStore('actor', () => {
  const actor = ref<Actor | null>(null)

  async function load() {
    const headers = import.meta.server ? useRequestHeaders(['cookie']) : undefined
    try {
      actor.value = await $fetch<Actor>('/api/me', { headers })
    } catch {
      actor.value = null
    }
    return actor.value
  }

  async function signIn(email: string, password: string) {
    await $fetch('/api/auth/login', { method: 'POST', body: { email, password } })
    return load()
  }

  function can(...roles: Role[]) {
    return actor.value ? roles.includes(actor.value.role) : false
  }

  async function signOut() {
    await $fetch('/api/auth/logout', { method: 'POST' })
    actor.value = null
    await navigateTo('/login')
  }

  return { actor, load, signIn, can, signOut }
})
