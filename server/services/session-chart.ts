// The session page's charts from a stored sessions row.
import { CHART_BUCKETS, overviewFromRpmPoints, traceChart, type TraceChart } from '#shared/domain/trace/chart'
import type { TraceOverview } from '#shared/domain/trace/overview'
import type { SessionDto } from '#shared/types/fleet'
import { json } from '../utils/db'


/** What the session page charts: the stored overview (rpm alone for one stored before channels), downsampled, with event markers. */
export function sessionChart(row: { trace_overview?: unknown; details?: unknown }, session: Pick<SessionDto, 'overRevs' | 'lowOilPressure'>): TraceChart | null {
  const stored = json<TraceOverview | null>(row.trace_overview, null)
  const points = json<{ overview?: { t: number; rpm: number }[] } | null>(row.details, null)?.overview ?? []
  const overview = stored ?? (points.length ? overviewFromRpmPoints(points) : null)
  if (!overview || !overview.t0.length) return null
  return traceChart(overview, { overRevs: session.overRevs, lowOilPressure: session.lowOilPressure }, CHART_BUCKETS)
}
