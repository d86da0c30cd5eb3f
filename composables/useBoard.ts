import { toCsv } from '#shared/csv'
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

const BOARD_CSV_COLUMNS = [
  'serial', 'engine_type', 'team', 'location', 'chassis', 'status', 'worst_used_percent', 'governing_limit', 'governing_part',
  'hours_since_rebuild', 'hours_total', 'immediate_inspection', 'next_event', 'can_finish_next_event', 'warning_at_event', 'limit_at_event',
] as const

/** Downloads the engines as shown on the board as a CSV file. */
export function downloadBoardCsv(engines: EngineSummaryDto[]) {
  const rows = engines.map((e) => ({
    serial: e.serial,
    engine_type: e.engineTypeCode,
    team: e.teamName ?? '',
    location: e.location,
    chassis: e.chassis ?? '',
    status: e.worst.status,
    worst_used_percent: (e.worst.fraction * 100).toFixed(1),
    governing_limit: e.worst.governing?.label ?? '',
    governing_part: e.worst.serial ?? '',
    hours_since_rebuild: e.hoursSinceRebuild.toFixed(2),
    hours_total: e.totalHours.toFixed(2),
    immediate_inspection: e.overRevFlags.immediateInspection ? 'yes' : 'no',
    next_event: e.nextEvent?.name ?? '',
    can_finish_next_event: e.nextEvent ? (e.nextEvent.ok ? 'yes' : 'no') : '',
    warning_at_event: e.warningAt?.name ?? '',
    limit_at_event: e.limitAt?.name ?? '',
  }))
  // Through the shared writer: a cell that could run as a spreadsheet formula is neutralised.
  const csv = toCsv(rows, BOARD_CSV_COLUMNS)
  const blob = new Blob([csv], { type: 'text/csv;charset=utf-8' })
  const url = URL.createObjectURL(blob)
  const a = document.createElement('a')
  a.href = url
  a.download = `fleet-life-${new Date().toISOString().slice(0, 10)}.csv`
  a.click()
  URL.revokeObjectURL(url)
}
