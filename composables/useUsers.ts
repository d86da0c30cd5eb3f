import type { Role } from '#shared/roles'

export interface UserRow { id: number; email: string; name: string; role: Role; active: boolean; organisationId: number; organisationName: string; organisationKind: 'supplier' | 'team' }
export interface Org { id: number; name: string; kind: 'supplier' | 'team' }

/** Users the actor may manage, the organisations they may belong to, and the changes to them. */
export async function useUsers() {
  const [users, orgs] = await Promise.all([
    useFetch<UserRow[]>('/api/users', { key: 'users', default: () => [] }),
    useFetch<Org[]>('/api/organisations', { key: 'orgs', default: () => [] }),
  ])

  async function createUser(body: Record<string, unknown>) {
    await $fetch('/api/users', { method: 'POST', body })
    await users.refresh()
  }
  async function setActive(userId: number, active: boolean) {
    await $fetch(`/api/users/${userId}`, { method: 'PATCH', body: { active } })
    await users.refresh()
  }

  return { users: users.data, orgs: orgs.data, error: users.error, refresh: users.refresh, createUser, setActive }
}
