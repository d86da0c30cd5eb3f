// The life check: turns the fleet's life into alerts, one per engine and cause listing its parts, each
// finding exactly once per life cycle, and queues the mail in the outbox: a digest per recipient and
// run, urgent levels at once as well (alert-record.ts; delivery is deliver-outbox.ts).
// Handed everything it needs (database, fleet life, clock, lock); it knows nothing of the server.
import type { Knex } from 'knex'
import type { EngineDetailDto, PartLifeDto } from '#shared/types/fleet'
import type { AlertDetails, AlertKind } from '#shared/schemas/alerts'
import { alertCause } from '#shared/domain/alert-groups'
import { percent } from './alert-mail'
import { queueAlertMail, recordGroup, type FindingGroup } from './alert-record'
import type { TaskLock } from './lock'

export const LIFE_CHECK_LOCK = 'crankledger-life-check'

export interface FleetLifeView {
  engines: EngineDetailDto[]
}

export interface Finding {
  /** Unique per part or engine, kind, level and life cycle: the same finding never alerts twice. */
  key: string
  kind: AlertKind
  level: string
  engineId: number
  componentId: number | null
  /** The finding's own title (the alert's when it stays alone). */
  title: string
  details: AlertDetails
  /** What the alert is about (a part group, the over-rev verdict, a forecast's event ...): findings of one engine, cause and level share an alert. Derived from the kind when absent. */
  cause?: { cause: string; label: string }
}

export interface FindingContext {
  db: Knex
  now: Date
  life: FleetLifeView
}

export interface LifeCheckDeps {
  db: Knex
  fleetLife: (now: Date) => Promise<FleetLifeView>
  now: () => Date
  lock: TaskLock
  instance: string
  publicUrl: string
  /** More findings from other checks (oil analysis ...), keyed the same way. */
  extraFindings?: (ctx: FindingContext) => Promise<Finding[]>
}

export interface LifeCheckResult {
  runId: number
  outcome: 'ok' | 'skipped' | 'error'
  findings: number
  alertsCreated: number
  /** open alerts that gained parts */
  alertsUpdated: number
  mailsQueued: number
  error: string | null
}

/** Where a life cycle starts: the part's current installation, the engine's last rebuild. */
export interface LifeCycles {
  installationOf: Map<number, number>
  inspectionClearedAt: Map<number, string | null>
}

const STATUS_WORDS: Record<string, string> = { warning: 'warning', due: 'rebuild due', over: 'limit reached' }
const LIFE_KIND: Record<string, AlertKind> = { warning: 'life-warning', due: 'life-due', over: 'life-over' }

function engineCycle(e: EngineDetailDto) {
  // A rebuild (teardown sign-off) moves rebuilt_at: the engine starts a new cycle and may alert again.
  return e.rebuiltAt ? `r${Date.parse(e.rebuiltAt)}` : 'b'
}

function partCycle(p: PartLifeDto, cycles: LifeCycles) {
  const inst = cycles.installationOf.get(p.componentId)
  return inst ? `i${inst}` : 'i0'
}

function baseDetails(e: EngineDetailDto, p: PartLifeDto | null): Omit<AlertDetails, 'status' | 'message' | 'event'> {
  return {
    engineSerial: e.serial,
    engineTypeCode: e.engineTypeCode,
    teamName: e.teamName,
    partSerial: p?.serial ?? null,
    partName: p?.typeName ?? null,
    position: p?.positionLabel ?? null,
    fraction: p ? p.fraction : null,
    governing: p?.governing ? { label: p.governing.label, used: p.governing.used, limit: p.governing.limit, unit: p.governing.unit, fraction: p.governing.fraction } : null,
  }
}

const partName = (p: PartLifeDto) => (p.positionLabel ?? p.typeName).toLowerCase()

/** Pure: the findings in one fleet-life snapshot. */
export function lifeFindings(life: FleetLifeView, cycles: LifeCycles): Finding[] {
  const out: Finding[] = []
  for (const e of life.engines) {
    // Retired engines do not run; an engine in teardown is being inspected already.
    if (e.status !== 'active') continue
    for (const p of e.parts) {
      const cycle = partCycle(p, cycles)
      if (p.status !== 'ok') {
        const governing = p.governing?.label.toLowerCase() ?? 'life'
        out.push({
          key: `component:${p.componentId}:life:${p.status}:${cycle}`,
          kind: LIFE_KIND[p.status]!,
          level: p.status,
          engineId: e.id,
          componentId: p.componentId,
          cause: alertCause(LIFE_KIND[p.status]!, { category: p.category }),
          title: `${e.serial} ${partName(p)} ${p.serial} at ${percent(p.fraction)} (${STATUS_WORDS[p.status]}) – ${governing}`,
          details: {
            ...baseDetails(e, p),
            status: STATUS_WORDS[p.status]!,
            event: p.limitAt ? { eventId: p.limitAt.eventId, name: p.limitAt.name, startsAt: null } : null,
            message:
              p.status === 'over'
                ? `${p.typeName} ${p.serial} in ${e.serial} has reached its ${governing} limit: it must not run until it is replaced or released by the supplier.`
                : p.status === 'due'
                  ? `${p.typeName} ${p.serial} in ${e.serial} is due for its rebuild (${governing}): plan the teardown now.`
                  : `${p.typeName} ${p.serial} in ${e.serial} has reached its warning level (${governing}): plan the rebuild.`,
          },
        })
      }
      if (p.immediateInspection) {
        const cleared = cycles.inspectionClearedAt.get(p.componentId)
        out.push({
          key: `component:${p.componentId}:over-rev:inspection:${cycle}:${cleared ? Date.parse(cleared) : 0}`,
          kind: 'over-rev',
          level: 'inspection',
          engineId: e.id,
          componentId: p.componentId,
          title: `${e.serial} ${partName(p)} ${p.serial} over-rev – immediate inspection`,
          details: {
            ...baseDetails(e, p),
            status: 'immediate inspection',
            event: null,
            message: `${e.serial} has logged an over-rev in the band that demands an immediate inspection of ${p.typeName} ${p.serial}: do not run the engine until it has been inspected and signed off.`,
          },
        })
      }
    }
    // The next event the engine is assigned to: will it reach a limit before or during it?
    const next = e.canFinish.find((c) => c.assigned)
    if (next && !next.ok && next.reason === 'projected-over') {
      const p = e.parts.find((x) => x.componentId === next.governingPartId) ?? null
      out.push({
        key: `engine:${e.id}:forecast:${next.eventId}:${engineCycle(e)}`,
        kind: 'forecast',
        level: 'forecast',
        engineId: e.id,
        componentId: p?.componentId ?? null,
        title: `${e.serial} forecast to reach a limit by ${next.name}${p ? ` – ${partName(p)} ${p.serial}` : ''}`,
        details: {
          ...baseDetails(e, p),
          fraction: next.worstFraction,
          status: 'forecast over the limit',
          event: { eventId: next.eventId, name: next.name, startsAt: next.startsAt },
          message: `At its planned running ${e.serial} is forecast to reach ${percent(next.worstFraction)} of a limit before or during ${next.name}${p ? ` (${p.typeName} ${p.serial})` : ''}: rebuild or replace before that event.`,
        },
      })
    }
  }
  return out
}

async function loadCycles(db: Knex): Promise<LifeCycles> {
  const [open, comps] = await Promise.all([
    db('installations').whereNull('to_at').select('id', 'component_id'),
    db('components').whereNotNull('inspection_cleared_at').select('id', 'inspection_cleared_at'),
  ])
  return {
    installationOf: new Map(open.map((r: any) => [r.component_id, r.id])),
    inspectionClearedAt: new Map(comps.map((r: any) => [r.id, new Date(r.inspection_cleared_at).toISOString()])),
  }
}

/** Findings of one engine, cause and level, in the order found. */
export function groupFindings(findings: Finding[]): FindingGroup[] {
  const groups = new Map<string, FindingGroup>()
  for (const f of findings) {
    const cause = f.cause ?? alertCause(f.kind, { event: f.details.event })
    const key = `${f.engineId}|${cause.cause}|${f.level}`
    const g = groups.get(key) ?? { engineId: f.engineId, kind: f.kind, level: f.level, cause: cause.cause, causeLabel: cause.label, items: [] }
    g.items.push({ key: f.key, componentId: f.componentId, title: f.title, details: f.details })
    groups.set(key, g)
  }
  return [...groups.values()]
}

export async function runLifeCheck(deps: LifeCheckDeps): Promise<LifeCheckResult> {
  const { db } = deps
  const startedAt = deps.now()
  const release = await deps.lock.tryAcquire(LIFE_CHECK_LOCK)
  if (!release) {
    const [runId] = await db('task_runs').insert({ task: 'life-check', instance: deps.instance, outcome: 'skipped', started_at: startedAt, finished_at: deps.now(), error: 'another instance is running the life check' })
    return { runId: Number(runId), outcome: 'skipped', findings: 0, alertsCreated: 0, alertsUpdated: 0, mailsQueued: 0, error: null }
  }
  let runId = 0
  try {
    const [inserted] = await db('task_runs').insert({ task: 'life-check', instance: deps.instance, outcome: 'running', started_at: startedAt })
    runId = Number(inserted)
    let findings = 0
    let alertsCreated = 0
    let alertsUpdated = 0
    let mailsQueued = 0
    try {
      const now = deps.now()
      const life = await deps.fleetLife(now)
      const cycles = await loadCycles(db)
      const all = lifeFindings(life, cycles)
      if (deps.extraFindings) all.push(...(await deps.extraFindings({ db, now, life })))
      findings = all.length
      const engines = new Map(life.engines.map((e) => [e.id, e]))
      for (const g of groupFindings(all)) {
        let owner = engines.get(g.engineId) as { supplierId: number; teamId: number | null } | undefined
        if (!owner) {
          const row = await db('engines').where('id', g.engineId).first('supplier_id', 'team_id')
          if (!row) continue
          owner = { supplierId: row.supplier_id, teamId: row.team_id ?? null }
        }
        const r = await recordGroup(db, g, { supplierId: owner.supplierId, teamId: owner.teamId ?? null }, { runId, now })
        if (r.change === 'new') alertsCreated++
        if (r.change === 'added') alertsUpdated++
      }
      mailsQueued = await queueAlertMail(db, { now: deps.now(), publicUrl: deps.publicUrl })
      await db('task_runs').where('id', runId).update({ outcome: 'ok', finished_at: deps.now(), findings, alerts_created: alertsCreated, mails_queued: mailsQueued })
      return { runId, outcome: 'ok', findings, alertsCreated, alertsUpdated, mailsQueued, error: null }
    } catch (e: any) {
      const error = String(e?.message ?? e).slice(0, 1000)
      await db('task_runs').where('id', runId).update({ outcome: 'error', finished_at: deps.now(), findings, alerts_created: alertsCreated, mails_queued: mailsQueued, error })
      return { runId, outcome: 'error', findings, alertsCreated, alertsUpdated, mailsQueued, error }
    }
  } finally {
    await release()
  }
}
