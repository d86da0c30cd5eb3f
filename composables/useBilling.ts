import type { ContractDto, StatementDto, StatementSummaryDto } from '#shared/types/billing'
import type { EventDto } from '#shared/types/fleet'

interface OrganisationRow { id: number; name: string; kind: 'supplier' | 'team'; supplierId: number | null }

/** The supplier's billing page: contracts, teams, every statement, and the writes on them. */
export async function useBillingOverview() {
  const [contracts, statements, organisations, engineTypes, events] = await Promise.all([
    useFetch<ContractDto[]>('/api/billing/contracts', { key: 'billing-contracts', default: () => [] }),
    useFetch<StatementSummaryDto[]>('/api/billing/statements', { key: 'billing-statements', default: () => [] }),
    useFetch<OrganisationRow[]>('/api/organisations', { key: 'billing-organisations', default: () => [] }),
    useFetch<{ id: number; code: string }[]>('/api/engine-types', { key: 'billing-engine-types', default: () => [] }),
    useFetch<EventDto[]>('/api/events', { key: 'billing-events', default: () => [] }),
  ])
  const teams = computed(() => organisations.data.value.filter((o) => o.kind === 'team'))
  /** events that have ended, latest first: only a closed period can be billed */
  const closedEvents = computed(() => events.data.value.filter((e) => Date.parse(e.endsAt) <= Date.now()).sort((a, b) => b.endsAt.localeCompare(a.endsAt)))

  async function createContract(body: Record<string, unknown>) {
    await $fetch('/api/billing/contracts', { method: 'POST', body })
    await contracts.refresh()
  }
  async function endContract(id: number, validTo: string) {
    await $fetch(`/api/billing/contracts/${id}/end`, { method: 'POST', body: { validTo } })
    await contracts.refresh()
  }
  async function saveContact(organisationId: number, body: Record<string, unknown>) {
    await $fetch(`/api/billing/contacts/${organisationId}`, { method: 'PUT', body })
  }
  async function generate(body: { teamId: number; month?: string; eventId?: number }) {
    const s = await $fetch<StatementDto>('/api/billing/statements', { method: 'POST', body })
    await statements.refresh()
    return s
  }
  async function review(id: number) {
    await $fetch(`/api/billing/statements/${id}/review`, { method: 'POST' })
    await statements.refresh()
  }
  async function issue(id: number) {
    await $fetch(`/api/billing/statements/${id}/issue`, { method: 'POST' })
    await statements.refresh()
  }

  return { contracts: contracts.data, statements: statements.data, teams, closedEvents, engineTypes: engineTypes.data, error: statements.error, refresh: statements.refresh, createContract, endContract, saveContact, generate, review, issue }
}

/** The statements the actor may see (a team manager: their own team's). */
export async function useStatementList() {
  const list = await useFetch<StatementSummaryDto[]>('/api/billing/statements', { key: 'statements', default: () => [] })
  return { statements: list.data, error: list.error, refresh: list.refresh }
}

/** One statement with its lines; review and issue reload it. */
export async function useStatement(id: number) {
  const s = await useFetch<StatementDto>(`/api/billing/statements/${id}`, { key: `statement-${id}` })
  async function review() {
    await $fetch(`/api/billing/statements/${id}/review`, { method: 'POST' })
    await s.refresh()
  }
  async function issue() {
    await $fetch(`/api/billing/statements/${id}/issue`, { method: 'POST' })
    await s.refresh()
  }
  return { statement: s.data, error: s.error, refresh: s.refresh, review, issue, csvUrl: `/api/billing/statements/${id}/csv` }
}
