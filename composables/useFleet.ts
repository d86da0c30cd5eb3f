import type { EngineDetailDto, EngineSummaryDto, LifeStatus, LimitMeasure, PartLifeDto, SessionDto } from '#shared/types/fleet'
import type { EngineChartsData } from '~/components/engine/EngineCharts.vue'

/** Every engine the actor may see, with its worst part and forecast. */
export async function useEngines() {
  const engines = await useFetch<EngineSummaryDto[]>('/api/engines', { key: 'engines', default: () => [] })
  return { engines: engines.data, status: engines.status, error: engines.error, refresh: engines.refresh }
}

/** One engine's build, life and forecast, and the figures its charts draw. */
export async function useEngine(id: Ref<number>) {
  const [engine, charts] = await Promise.all([
    useFetch<EngineDetailDto>(() => `/api/engines/${id.value}`, { key: `engine-${id.value}` }),
    useFetch<EngineChartsData>(() => `/api/engines/${id.value}/charts`, { key: `engine-charts-${id.value}` }),
  ])
  return { engine: engine.data, error: engine.error, refresh: engine.refresh, charts: charts.data, chartsError: charts.error }
}

/** One page of an engine's sessions in the order asked for (the query is reactive). */
export async function useEngineSessions(engineId: MaybeRefOrGetter<number>, query: Ref<Record<string, string | number>>) {
  const sessions = await useFetch<{ items: SessionDto[]; total: number }>(() => `/api/engines/${toValue(engineId)}/sessions`, { key: `engine-sessions-${toValue(engineId)}`, query })
  return { data: sessions.data, status: sessions.status, error: sessions.error, refresh: sessions.refresh }
}

export interface PartRow {
  componentId: number; serial: string; typeName: string; category: string; componentStatus: string
  engineId: number | null; engineSerial: string | null; position: string | null
  fraction: number; status: LifeStatus; governing: LimitMeasure | null
}

/** Serialised parts matching a search and a state (the query is reactive). */
export async function useParts(query: Ref<Record<string, string | undefined>>) {
  const parts = await useFetch<PartRow[]>('/api/parts', { key: 'parts', query, default: () => [] })
  return { parts: parts.data, status: parts.status, error: parts.error, refresh: parts.refresh }
}

export interface PartConcession {
  id: number; grantedAt: string; grantedByName: string; reason: string; statusBefore: string; statusAfter: string; fractionBefore: number | null
  limits: { hours: number | null; km: number | null; eqHours: number | null; overRevEvents: Record<string, number> | null }
  findings: { id: number; teardownId: number; condition: string; note: string | null; disposition: string }[]
}
export interface PartFinding { id: number; teardownId: number; engineSerial: string; condition: string; disposition: string; note: string | null; at: string }
export interface ConcessionBody { reason: string; limitHours?: number; limitKm?: number; limitEqHours?: number; limitOverRev?: Record<string, number>; findingIds: number[] }

export interface PartAnswer {
  part: PartLifeDto & { componentStatus: string; batch: string | null; bornAt: string; engineId: number | null; engineSerial: string | null; serialLimits: Record<string, unknown> | null }
  installations: { engineId: number | null; engineSerial: string; position: string; from: string; to: string | null; removedStatus: string | null }[]
  concessions: PartConcession[]
  findings: PartFinding[]
  sessions: { id: number; at: string; engineSerial: string; kind: string; runningSeconds: number; distanceKm: number; eventName: string | null }[]
  timeline: { at: string; fraction: number; status: LifeStatus }[]
}

/** One part's life, where it was fitted and the sessions it ran; the supplier's release of it. */
export async function usePart(id: Ref<number>) {
  const part = await useFetch<PartAnswer>(() => `/api/parts/${id.value}`, { key: `part-${id.value}` })
  async function grantConcession(body: ConcessionBody) {
    await $fetch(`/api/parts/${id.value}/concessions`, { method: 'POST', body })
    await part.refresh()
  }
  return { data: part.data, error: part.error, refresh: part.refresh, grantConcession }
}

export interface AuditRow { id: number; at: string; userName: string | null; organisationName: string | null; entity: string; entityId: string; action: string; before: unknown; after: unknown }

/** One page of the audit log for the filters in the URL (the query is reactive). */
export async function useAuditLog(query: Ref<Record<string, string | number | undefined>>) {
  const log = await useFetch<{ total: number; entities: string[]; items: AuditRow[] }>('/api/audit', { key: 'audit', query })
  return { data: log.data, error: log.error, refresh: log.refresh }
}
