// A limit change previewed before it is saved. The preview reads the supplier's fleet once, in one
// read-only transaction (one consistent snapshot, and the database itself refuses any write), runs
// the life engine twice on those rows (limits as they are, and as proposed), and compares the two.
// When the server already holds the fleet's rows and life for the board, and they show exactly what
// the snapshot shows (same fingerprint), it starts from those instead of reading them again.
// Its token carries a fingerprint of the data it read; saving checks it again under lock and
// refuses with 409 when anything that moves life has moved meanwhile, so what is saved is what
// was previewed, and the audit row keeps the preview's summary.
import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import { canonicalJson } from '#shared/canonical-json'
import { compareFleets, summarisePreview, type LimitPreviewSummary, type PreviewFleet } from '#shared/domain/limit-preview'
import { reclassifyEvents } from '#shared/domain/over-rev'
import type { ComponentTypeLimitChange, EngineTypeLimitChange } from '#shared/schemas/limit-preview'
import type { LimitPreviewDto, LimitSaveDto, LimitTargetKind } from '#shared/types/limit-preview'
import { canWriteCatalogue, type Actor } from '../utils/guard'
import { badRequest, conflict, notFound } from '../utils/errors'
import { idleHeld } from '../utils/idle-held'
import { readPreviewToken, signPreviewToken } from '../utils/preview-token'
import { updateComponentType } from './component-types'
import { updateEngineType } from './engine-types'
import { lifeRevision, loadComponentTypes, loadEngineTypes, toComponentType, toEngineType } from './fleet-data'
import { cachedFleet, fleetLifeFromRows, loadFleetRows, type FleetLife, type FleetRows } from './life'

type Db = Knex | Knex.Transaction
type Target =
  | { kind: 'component-type'; id: number; change: ComponentTypeLimitChange }
  | { kind: 'engine-type'; id: number; change: EngineTypeLimitChange }

interface TokenPayload {
  kind: LimitTargetKind
  id: number
  change: string
  fingerprint: string
  summary: LimitPreviewSummary
}

export function previewComponentTypeLimits(db: Knex, actor: Actor, id: number, change: ComponentTypeLimitChange) {
  return preview(db, actor, { kind: 'component-type', id, change })
}

export function previewEngineTypeLimits(db: Knex, actor: Actor, id: number, change: EngineTypeLimitChange) {
  return preview(db, actor, { kind: 'engine-type', id, change })
}

export function saveComponentTypeLimits(db: Knex, actor: Actor, id: number, input: { change: ComponentTypeLimitChange; previewToken: string }) {
  return save(db, actor, { kind: 'component-type', id, change: input.change }, input.previewToken)
}

export function saveEngineTypeLimits(db: Knex, actor: Actor, id: number, input: { change: EngineTypeLimitChange; previewToken: string }) {
  return save(db, actor, { kind: 'engine-type', id, change: input.change }, input.previewToken)
}

async function preview(db: Knex, actor: Actor, target: Target, now = new Date()): Promise<LimitPreviewDto> {
  return db.transaction(
    async (trx) => {
      const t0 = performance.now()
      const current = await targetRow(trx, actor, target)
      checkChange(target, current.dto)
      const facts = await fleetFacts(trx, now)
      const fingerprint = fingerprintOf(facts)
      const pairs = neededPairs(target)
      let base = keptRows(fingerprint, current.supplierId, now, pairs)
      const t1 = performance.now()
      if (!base) {
        // the supplier's own engines and part types: the catalogue owner's fleet is what its limits reach
        const typeIds = new Set<number>(await trx('component_types').where('supplier_id', current.supplierId).pluck('id'))
        const engineIds = new Set<number>(await trx('engines').where('supplier_id', current.supplierId).pluck('id'))
        const key = keyOf(fingerprint, current.supplierId, now)
        const shared = pairs.length ? null : await sharedRows(facts.revision, fingerprint, now)
        if (shared) {
          base = keepRows({ key, pairs, rows: shared.rows, engineIds, typeIds, before: previewFleet(shared.life, engineIds, typeIds), source: 'board' })
        } else {
          const rows = await loadFleetRows(trx, now, { writeCache: false, lifeOnly: true, extraPairs: extraPairsFor(target, await supplierExponents(trx, current.supplierId)) }, (qb) =>
            qb.where('e.supplier_id', current.supplierId),
          )
          base = keepRows({ key, pairs, rows, engineIds, typeIds, before: previewFleet(fleetLifeFromRows(rows, now, 0), engineIds, typeIds), source: 'read' })
        }
      }
      const before = base.before
      const t2 = performance.now()
      const after = previewFleet(fleetLifeFromRows(withChange(base.rows, target), now, 0), base.engineIds, base.typeIds)
      const t3 = performance.now()
      const result = compareFleets(before, after)
      const summary = summarisePreview(result)
      const payload: TokenPayload = { kind: target.kind, id: target.id, change: canonicalJson(target.change), fingerprint, summary }
      return {
        ...result,
        target: { kind: target.kind, id: target.id, code: current.dto.code, name: current.dto.name },
        fields: changedFields(current.dto as unknown as Record<string, unknown>, target.change),
        summary,
        covered: {
          engines: before.engines.length,
          parts: before.engines.reduce((n, e) => n + e.parts.length, 0) + before.looseParts.length,
          events: new Set(before.engines.flatMap((e) => e.canFinish.map((c) => c.eventId))).size,
        },
        computedAt: now.toISOString(),
        timingsMs: { check: Math.round(t1 - t0), readAndBefore: Math.round(t2 - t1), rows: base.reused ? 'kept' : base.source, after: Math.round(t3 - t2), compare: Math.round(performance.now() - t3) },
        previewToken: signPreviewToken(payload),
      }
    },
    { readOnly: true },
  )
}

// The rows and the unchanged fleet of the last preview, kept while the data they came from holds (same
// fingerprint, same hour) so that a supplier engineer trying values one after another waits for one
// read; dropped after a few idle minutes. Rows filled with a proposed exponent or reference speed are
// kept with those pairs: a preview needing others reads afresh.
interface Kept { key: string; pairs: string[]; rows: FleetRows; engineIds: Set<number>; typeIds: Set<number>; before: PreviewFleet; reused?: boolean; source: 'board' | 'read' }
const kept = idleHeld<Kept>(10 * 60_000)

function keyOf(fingerprint: string, supplierId: number, now: Date) {
  return `${fingerprint}|${supplierId}|${Math.floor(now.getTime() / 3_600_000)}`
}

function keptRows(fingerprint: string, supplierId: number, now: Date, pairs: string[]): (Kept & { reused: boolean }) | null {
  const k = kept.get()
  if (!k || k.key !== keyOf(fingerprint, supplierId, now) || !pairs.every((p) => k.pairs.includes(p))) return null
  return { ...k, reused: true }
}

function keepRows(entry: Kept): Kept & { reused: boolean } {
  kept.set(entry)
  return { ...entry, reused: false }
}

/** The equivalent-hour pairs a change needs beyond those in use, named loosely (the exponent or the reference speed). */
function neededPairs(target: Target): string[] {
  if (target.kind === 'component-type') return target.change.damageExponent === undefined ? [] : [`p${target.change.damageExponent}`]
  return target.change.referenceRpm === undefined ? [] : [`ref${target.id}@${target.change.referenceRpm}`]
}

async function save(db: Knex, actor: Actor, target: Target, token: string, now = new Date()): Promise<LimitSaveDto> {
  const payload = readPreviewToken<TokenPayload>(token)
  if (!payload) badRequest('Invalid input: previewToken: not a preview made by this server; preview the change again')
  return db.transaction(async (trx) => {
    const current = await targetRow(trx, actor, target, true)
    if (payload.kind !== target.kind || payload.id !== target.id || payload.change !== canonicalJson(target.change)) {
      conflict('This change is not the one previewed: preview it again before saving', { reason: 'change' })
    }
    // Every write that moves life bumps this row: holding it keeps them out until the change is in.
    await trx('life_revision').where('id', 1).forUpdate().first()
    if (fingerprintOf(await fleetFacts(trx, now)) !== payload.fingerprint) {
      conflict('The fleet data changed since this preview (a session, build, plan or limit was saved meanwhile): nothing was saved; check the refreshed preview and save again', { reason: 'moved' })
    }
    const auditNote = { preview: payload.summary }
    if (target.kind === 'component-type') await updateComponentType(trx as unknown as Knex, actor, target.id, target.change, auditNote)
    else await updateEngineType(trx as unknown as Knex, actor, target.id, target.change, auditNote)
    return { target: { kind: target.kind, id: target.id, code: current.dto.code, name: current.dto.name }, summary: payload.summary }
  })
}

async function targetRow(trx: Knex.Transaction, actor: Actor, target: Target, lock = false) {
  const qb = trx(target.kind === 'component-type' ? 'component_types' : 'engine_types').where('id', target.id)
  const row = await (lock ? qb.forUpdate() : qb).first()
  if (!row || !canWriteCatalogue(actor, row.supplier_id)) notFound(target.kind === 'component-type' ? 'Component type' : 'Engine type')
  const dto = target.kind === 'component-type' ? toComponentType(row) : toEngineType(row)
  return { supplierId: row.supplier_id as number, dto }
}

function checkChange(target: Target, current: object) {
  if (target.kind !== 'component-type') return
  const dto = current as { warningLevel: number; dueLevel: number }
  const warning = target.change.warningLevel ?? dto.warningLevel
  const due = target.change.dueLevel ?? dto.dueLevel
  if (warning >= due) badRequest('Invalid input: dueLevel: must be above the warning level')
}

async function supplierExponents(db: Db, supplierId: number): Promise<number[]> {
  return (await db('component_types').where('supplier_id', supplierId).distinct('damage_exponent').pluck('damage_exponent')).map(Number)
}

/** The equivalent-hour pairs the proposed values need beyond those in use (evaluated from rpm moments, kept in memory only). */
function extraPairsFor(target: Target, exponents: number[]) {
  // the sessions read are the supplier's own (the read is narrowed to its engines)
  return (engineTypeId: number, referenceRpm: number) => {
    if (target.kind === 'component-type') {
      const p = target.change.damageExponent
      return p === undefined ? [] : [{ exponent: p, referenceRpm }]
    }
    const ref = target.change.referenceRpm
    return ref === undefined || engineTypeId !== target.id ? [] : exponents.map((p) => ({ exponent: p, referenceRpm: ref }))
  }
}

/** The same rows with the proposed values in place; over-revs of the engine type re-decided against new bands, as saving does. */
function withChange(rows: FleetRows, target: Target): FleetRows {
  if (target.kind === 'component-type') {
    return { ...rows, componentTypes: rows.componentTypes.map((c) => (c.id === target.id ? { ...c, ...target.change } : c)) }
  }
  const bands = target.change.overRevBands
  const ofType = new Set(rows.engineRows.filter((e: any) => e.engine_type_id === target.id).map((e: any) => e.id as number))
  return {
    ...rows,
    engineTypes: rows.engineTypes.map((t) => (t.id === target.id ? { ...t, ...target.change } : t)),
    sessionRows: bands ? rows.sessionRows.map((s) => (ofType.has(s.engineId) && s.overRevs.length ? { ...s, overRevs: reclassifyEvents(s.overRevs, bands) } : s)) : rows.sessionRows,
  }
}

function previewFleet(life: FleetLife, engineIds: Set<number>, typeIds: Set<number>): PreviewFleet {
  return {
    engines: life.engines.filter((e) => engineIds.has(e.id)),
    looseParts: [...life.parts.values()].filter((p) => p.engineId === null && typeIds.has(p.componentTypeId)),
  }
}

/** Everything a preview's answer depends on besides the change: any write that moves life bumps the revision; the rest is read whole. */
interface FleetFacts {
  revision: number
  events: number[]
  engines: { id: number; team_id: number | null; status: string; engine_type_id: number }[]
  componentTypes: unknown[]
  engineTypes: unknown[]
}

async function fleetFacts(db: Db, now: Date): Promise<FleetFacts> {
  const [revision, events, engines, componentTypes, engineTypes] = await Promise.all([
    lifeRevision(db),
    db('events').where('ends_at', '>', now).orderBy('id').pluck('id'),
    db('engines').orderBy('id').select('id', 'team_id', 'status', 'engine_type_id'),
    loadComponentTypes(db),
    loadEngineTypes(db),
  ])
  return { revision, events, engines, componentTypes, engineTypes }
}

/** The same facts as the fleet rows hold them (the rows' coming events as they were read). */
function factsOfRows(rows: FleetRows, revision: number): FleetFacts {
  return {
    revision,
    events: rows.eventRows.map((e: any) => e.id as number).sort((a, b) => a - b),
    engines: [...rows.engineRows].sort((a: any, b: any) => a.id - b.id).map((e: any) => ({ id: e.id, team_id: e.team_id, status: e.status, engine_type_id: e.engine_type_id })),
    componentTypes: rows.componentTypes,
    engineTypes: rows.engineTypes,
  }
}

function fingerprintOf(facts: FleetFacts): string {
  return createHash('sha256').update(JSON.stringify(facts)).digest('base64url')
}

/**
 * The board's rows and life, when the server holds them for this revision and hour and they show
 * exactly what this preview's own snapshot shows (the same fingerprint); null otherwise.
 */
async function sharedRows(revision: number, fingerprint: string, now: Date): Promise<{ rows: FleetRows; life: FleetLife } | null> {
  const shared = cachedFleet(revision, now)
  if (!shared) return null
  try {
    const [rows, life] = await Promise.all([shared.rows, shared.life])
    return fingerprintOf(factsOfRows(rows, revision)) === fingerprint ? { rows, life } : null
  } catch {
    return null // the board's read failed: this preview reads for itself
  }
}


function changedFields(current: Record<string, unknown>, change: Record<string, unknown>) {
  return Object.entries(change)
    .filter(([k, v]) => canonicalJson(current[k] ?? null) !== canonicalJson(v ?? null))
    .map(([field, after]) => ({ field, before: current[field] ?? null, after: after ?? null }))
}
