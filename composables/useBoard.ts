import type { EngineSummaryDto } from '#shared/types/fleet'

export interface BoardAnswer {
  engines: EngineSummaryDto[]
  teams: { id: number; name: string }[]
  engineTypes: { id: number; code: string; name: string }[]
  computedAt: string
}

/** The fleet life board for the filters in the URL (the query is reactive: a new filter reloads it). */
export async function useBoard(query: Ref<Record<string, string>>) {
  const board = await useFetch<BoardAnswer>('/api/board', { key: 'board', query })
  return { data: board.data, status: board.status, error: board.error, refresh: board.refresh }
}
