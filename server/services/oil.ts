/**
 * Oil analysis: samples per engine, entry by form and lab CSV, the lab's PDF
 * report, limits per engine type and the assessment of every sample.
 *
 * The assessment supports, and never replaces, the supplier's service
 * instructions, inspection and licensed practice.
 */
import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import type { ZodError } from 'zod'
import { DEFAULT_OIL_LIMITS, populationLimits, type OilLimits, type OilReason, type OilSampleValues, type OilStatus } from '#shared/domain/oil/limits'
import { oilSampleSchema } from '#shared/domain/oil/schema'
import { assessEngineHistory, assessLatest, leaveOneOutLimits } from '#shared/domain/oil/history'
import { OilLimitsSchema } from '#shared/schemas/oil'
import type { OilEngineDto, OilEngineStatusDto, OilLimitsDto, OilSampleDto } from '#shared/types/oil'
import { canReadCatalogue, canSee, canWriteCatalogue, scopeCatalogue, scopeQuery, type Actor } from '../utils/guard'
import { badRequest, conflict, notFound, zodMessage } from '../utils/errors'
import { iso, json } from '../utils/db'
import { audit } from '../utils/audit'
import { getFile, putFile, removeFile } from '../utils/file-store'
import { committedAfterLoss, isUnavailableAnswer } from '../utils/commit-check'
import { engineRowFor } from './engine-rows'
import { bumpLifeRevision } from './fleet-data'
import { insertSamples, sampleUpdateRow, sampleValues, type SampleRow } from '../../db/oil-samples'

type Db = Knex | Knex.Transaction

export const PDF_MAX_BYTES = 10 * 1024 * 1024

// ---------------------------------------------------------------- limits

function completeLimits(stored: unknown): OilLimits {
  const raw = json<unknown>(stored, null)
  // Keys added since the row was written take their defaults instead of failing the whole value.
  const parsed = OilLimitsSchema.safeParse(raw && typeof raw === 'object' && !Array.isArray(raw) ? { ...DEFAULT_OIL_LIMITS, ...raw } : raw)
  // A stored value that no longer reads as limits falls back to the defaults rather than failing every page.
  return parsed.success ? (parsed.data as OilLimits) : DEFAULT_OIL_LIMITS
}

async function limitsByType(db: Db): Promise<Map<number, OilLimits>> {
  const rows = await db('oil_limits').select('engine_type_id', 'limits')
  return new Map(rows.map((r) => [r.engine_type_id as number, completeLimits(r.limits)]))
}

export async function limitsForType(db: Db, engineTypeId: number): Promise<{ limits: OilLimits; isDefault: boolean }> {
  const row = await db('oil_limits').where('engine_type_id', engineTypeId).first()
  return row ? { limits: completeLimits(row.limits), isDefault: false } : { limits: DEFAULT_OIL_LIMITS, isDefault: true }
}

async function typePopulation(db: Db, engineTypeId: number): Promise<{ engineId: number; values: OilSampleValues; row: SampleRow }[]> {
  const rows: SampleRow[] = await db('oil_samples as s').join('engines as e', 'e.id', 's.engine_id').where('e.engine_type_id', engineTypeId).select('s.*')
  return rows.map((row) => ({ engineId: row.engine_id, values: sampleValues(row), row }))
}

async function visibleEngineType(db: Db, actor: Actor, engineTypeId: number) {
  const type = await db('engine_types').where('id', engineTypeId).first('id', 'code', 'name', 'supplier_id')
  // Teams read the limits of their supplier's types; another supplier's type answers 404.
  if (!type || !canReadCatalogue(actor, type.supplier_id)) notFound('Engine type')
  return type
}

export async function oilLimitsView(db: Db, actor: Actor, engineTypeId: number): Promise<OilLimitsDto> {
  const type = await visibleEngineType(db, actor, engineTypeId)
  const { limits, isDefault } = await limitsForType(db, engineTypeId)
  const population = await typePopulation(db, engineTypeId)
  return {
    engineTypeId: type.id,
    engineTypeCode: type.code,
    engineTypeName: type.name,
    limits,
    isDefault,
    population: populationLimits(population.map((p) => p.values), limits),
    populationSamples: population.length,
  }
}

export async function oilLimitsList(db: Db, actor: Actor): Promise<OilLimitsDto[]> {
  const types = await scopeCatalogue(db('engine_types').orderBy('code').select('id'), actor)
  const out: OilLimitsDto[] = []
  for (const t of types) out.push(await oilLimitsView(db, actor, t.id))
  return out
}

export async function saveOilLimits(db: Knex, actor: Actor, engineTypeId: number, limits: OilLimits): Promise<OilLimitsDto> {
  await db.transaction(async (trx) => {
    // Oil status shows on the board, which is cached per life revision.
    await bumpLifeRevision(trx)
    const type = await trx('engine_types').where('id', engineTypeId).forUpdate().first('id', 'supplier_id')
    if (!type || !canWriteCatalogue(actor, type.supplier_id)) notFound('Engine type')
    const before = await trx('oil_limits').where('engine_type_id', engineTypeId).first()
    if (before) await trx('oil_limits').where('engine_type_id', engineTypeId).update({ limits: JSON.stringify(limits), updated_by: actor.id, updated_at: new Date() })
    else await trx('oil_limits').insert({ engine_type_id: engineTypeId, limits: JSON.stringify(limits), updated_by: actor.id })
    await audit(trx, actor, { entity: 'oil_limits', entityId: engineTypeId, action: 'update', before: before ? json(before.limits, null) : DEFAULT_OIL_LIMITS, after: limits })
  })
  return oilLimitsView(db, actor, engineTypeId)
}

// ------------------------------------------------------------ assessment

export interface OilEngineStatus {
  status: OilStatus
  reasons: OilReason[]
  sampleId: string
  sampledAt: string
}

/**
 * Latest sample of every engine with samples, assessed against the absolute
 * limits of its type, the rate from its previous sample and the statistical
 * limits from the type's population (once that rests on enough samples).
 * Whole fleet, unscoped: callers filter by what the actor may see.
 */
export async function oilStatusByEngine(db: Db): Promise<Map<number, OilEngineStatus>> {
  const rows: (SampleRow & { engine_type_id: number })[] = await db('oil_samples as s').join('engines as e', 'e.id', 's.engine_id').select('s.*', 'e.engine_type_id')
  const limits = await limitsByType(db)
  const byType = new Map<number, OilSampleValues[]>()
  const byEngine = new Map<number, { typeId: number; samples: OilSampleValues[] }>()
  for (const row of rows) {
    const values = sampleValues(row)
    if (!byType.has(row.engine_type_id)) byType.set(row.engine_type_id, [])
    byType.get(row.engine_type_id)!.push(values)
    if (!byEngine.has(row.engine_id)) byEngine.set(row.engine_id, { typeId: row.engine_type_id, samples: [] })
    byEngine.get(row.engine_id)!.samples.push(values)
  }
  const out = new Map<number, OilEngineStatus>()
  const popByType = new Map<number, ReturnType<typeof leaveOneOutLimits>>()
  for (const [engineId, { typeId, samples }] of byEngine) {
    const typeLimits = limits.get(typeId) ?? DEFAULT_OIL_LIMITS
    if (!popByType.has(typeId)) popByType.set(typeId, leaveOneOutLimits(byType.get(typeId)!, typeLimits))
    const latest = assessLatest(samples, typeLimits, byType.get(typeId)!, popByType.get(typeId)!)
    if (!latest) continue
    out.set(engineId, { status: latest.assessment.status, reasons: latest.assessment.reasons, sampleId: latest.values.sampleId, sampledAt: latest.values.sampledAt })
  }
  return out
}

/** Latest oil status of every engine the actor may see (engines without samples included, latest null). */
export async function oilList(db: Db, actor: Actor): Promise<OilEngineStatusDto[]> {
  const qb = db('engines as e')
    .join('engine_types as t', 't.id', 'e.engine_type_id')
    .leftJoin('organisations as o', 'o.id', 'e.team_id')
    .where('e.status', '!=', 'retired')
    .orderBy('e.serial')
    .select('e.id', 'e.serial', 'e.engine_type_id', 't.code as type_code', 'o.name as team_name')
    .select(db.raw('(SELECT COUNT(*) FROM oil_samples s WHERE s.engine_id = e.id) AS sample_count'))
  scopeQuery(qb, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })
  const engines = await qb
  const statuses = await oilStatusByEngine(db)
  return engines.map((e: any) => {
    const s = statuses.get(e.id)
    return {
      engineId: e.id,
      serial: e.serial,
      engineTypeId: e.engine_type_id,
      engineTypeCode: e.type_code,
      teamName: e.team_name ?? null,
      samples: Number(e.sample_count),
      latest: s ? { sampleId: s.sampleId, sampledAt: s.sampledAt, status: s.status, reasons: s.reasons } : null,
    }
  })
}

function sampleDto(row: SampleRow, assessed: ReturnType<typeof assessEngineHistory>[number]): OilSampleDto {
  return {
    ...assessed.values,
    id: row.id,
    engineId: row.engine_id,
    lab: row.lab,
    source: row.source,
    attachment: row.attachment_key ? { name: row.attachment_name ?? 'report.pdf', size: row.attachment_size ?? 0 } : null,
    createdAt: iso(row.created_at),
    status: assessed.assessment.status,
    reasons: assessed.assessment.reasons,
    iso4406: assessed.assessment.iso4406,
    viscosityIndex: assessed.assessment.viscosityIndex,
    gradeBasis: assessed.assessment.grade,
    gradeCheck: assessed.assessment.gradeCheck,
    hthsCheck: assessed.assessment.hthsCheck,
    viscosityChange: assessed.assessment.viscosityChange,
    previousSampleId: assessed.previousSampleId,
    version: Number(row.version ?? 1),
  }
}

/** An engine's samples, oldest first, each with its derived figures and assessment. */
export async function engineOil(db: Db, actor: Actor, engineId: number): Promise<OilEngineDto> {
  const engine = await engineRowFor(db, actor, engineId)
  const type = await db('engine_types').where('id', engine.engine_type_id).first('id', 'code')
  const team = engine.team_id ? await db('organisations').where('id', engine.team_id).first('name') : null
  const { limits, isDefault } = await limitsForType(db, engine.engine_type_id)
  const population = await typePopulation(db, engine.engine_type_id)
  const own = population.filter((p) => p.engineId === engineId)
  const rowsById = new Map(own.map((p) => [p.values.sampleId, p.row]))
  const assessed = assessEngineHistory(own.map((p) => p.values), limits, population.map((p) => p.values))
  return {
    engine: { id: engine.id, serial: engine.serial, engineTypeId: type.id, engineTypeCode: type.code, teamName: team?.name ?? null, builtAt: iso(engine.built_at) },
    limits,
    limitsAreDefault: isDefault,
    population: populationLimits(population.map((p) => p.values), limits),
    samples: assessed.map((a) => sampleDto(rowsById.get(a.values.sampleId)!, a)),
  }
}

/** A sample row the actor may see; another team's sample answers 404. */
async function sampleRowFor(db: Db, actor: Actor, id: number, opts: { forUpdate?: boolean } = {}) {
  const qb = db('oil_samples as s').join('engines as e', 'e.id', 's.engine_id').where('s.id', id).select('s.*', 'e.supplier_id', 'e.team_id')
  if (opts.forUpdate) qb.forUpdate()
  const row = await qb.first()
  if (!row || !canSee(actor, { supplierId: row.supplier_id, teamId: row.team_id })) notFound('Oil sample')
  return row as SampleRow & { supplier_id: number; team_id: number | null }
}

export async function oilSample(db: Db, actor: Actor, id: number): Promise<OilSampleDto> {
  const row = await sampleRowFor(db, actor, id)
  const detail = await engineOil(db, actor, row.engine_id)
  return detail.samples.find((s) => s.id === id)!
}

// ----------------------------------------------------------------- entry

export function sampleIssues(error: ZodError) {
  return zodMessage(error).issues
}

/** The sample's figures checked against the engine (400 naming the field), and its lab number unique (409). */
async function validSample(trx: Knex.Transaction, engine: { built_at: Date | string | null }, input: unknown, now: Date, exceptId?: number): Promise<OilSampleValues> {
  const parsed = oilSampleSchema({ now, builtAt: engine.built_at ? new Date(engine.built_at) : null }).safeParse(input)
  if (!parsed.success) {
    const { message, issues } = zodMessage(parsed.error)
    badRequest(message, { issues })
  }
  const values = parsed.data
  const taken = trx('oil_samples').where('sample_id', values.sampleId)
  if (exceptId !== undefined) taken.whereNot('id', exceptId)
  if (await taken.first('id')) {
    conflict(`sampleId: sample ${values.sampleId} is already recorded`, { issues: [{ path: 'sampleId', message: `sample ${values.sampleId} is already recorded` }] })
  }
  return values
}

/** Form entry of one sample. */
export async function createOilSample(db: Knex, actor: Actor, engineId: number, lab: string | null, input: unknown, now = new Date()): Promise<OilSampleDto> {
  const id = await db.transaction(async (trx) => {
    // Oil status shows on the board, which is cached per life revision.
    await bumpLifeRevision(trx)
    const engine = await engineRowFor(trx, actor, engineId, { forUpdate: true })
    const values = await validSample(trx, engine, input, now)
    const [newId] = await insertSamples(trx, [{ engineId, values, lab, source: 'form' }], actor.id)
    await audit(trx, actor, { entity: 'oil_sample', entityId: newId!, action: 'create', after: { engineId, lab, ...values } })
    return newId!
  })
  return oilSample(db, actor, id)
}

/** Corrects a recorded sample (a typing slip, a lab's re-issued report); the engine stays, the change is audited. */
export async function updateOilSample(db: Knex, actor: Actor, id: number, lab: string | null, input: unknown, now = new Date(), seen: { baseVersion?: number } = {}): Promise<OilSampleDto> {
  await db.transaction(async (trx) => {
    // Oil status shows on the board, which is cached per life revision.
    await bumpLifeRevision(trx)
    const row = await sampleRowFor(trx, actor, id, { forUpdate: true })
    const version = Number(row.version ?? 1)
    if (seen.baseVersion !== undefined && seen.baseVersion !== version) {
      // Changed by someone else since this client read it: refuse, and hand back what is stored now.
      const current = await oilSample(trx, actor, id)
      conflict(`baseVersion: sample ${row.sample_id} was changed by someone else since you opened it (version ${seen.baseVersion}, now ${version}); compare and correct it again`, { field: 'baseVersion', current })
    }
    const engine = await trx('engines').where('id', row.engine_id).first('built_at')
    const values = await validSample(trx, engine, input, now, id)
    await trx('oil_samples').where('id', id).update({ ...sampleUpdateRow(values, lab), version: version + 1 })
    await audit(trx, actor, { entity: 'oil_sample', entityId: id, action: 'update', before: { lab: row.lab, ...sampleValues(row) }, after: { lab, ...values } })
  })
  return oilSample(db, actor, id)
}

export async function deleteOilSample(db: Knex, actor: Actor, id: number): Promise<void> {
  const key = await db.transaction(async (trx) => {
    // Oil status shows on the board, which is cached per life revision.
    await bumpLifeRevision(trx)
    const row = await sampleRowFor(trx, actor, id, { forUpdate: true })
    await trx('oil_samples').where('id', id).delete()
    await audit(trx, actor, { entity: 'oil_sample', entityId: id, action: 'delete', before: sampleValues(row) })
    return row.attachment_key
  })
  // The report goes after the row: a failed removal leaves an orphan file, never a row without its file.
  if (key) await removeFile(key)
}

// ------------------------------------------------------------ attachment

/** Stores the lab's PDF report of a sample under a generated key (replacing an earlier one). */
export async function attachOilReport(db: Knex, actor: Actor, id: number, file: { data: Buffer; filename?: string; type?: string }): Promise<OilSampleDto> {
  if (file.data.length === 0) badRequest('file: the file is empty')
  if (file.data.length > PDF_MAX_BYTES) badRequest(`file: the report must be at most ${PDF_MAX_BYTES / 1024 / 1024} MB`)
  // Trust the content, not the name or the declared type.
  if (file.data.subarray(0, 5).toString('latin1') !== '%PDF-') badRequest('file: the report must be a PDF (the file does not start with %PDF-)')
  await sampleRowFor(db, actor, id)
  const key = `oil:${randomUUID()}.pdf`
  const name = (file.filename ?? 'report.pdf').replace(/[\\/\r\n"]+/g, '_').slice(0, 255) || 'report.pdf'
  await putFile(key, file.data)
  let previousKey: string | null = null
  try {
    await db.transaction(async (trx) => {
      const row = await sampleRowFor(trx, actor, id, { forUpdate: true })
      previousKey = row.attachment_key
      await trx('oil_samples').where('id', id).update({ attachment_key: key, attachment_name: name, attachment_size: file.data.length })
      await audit(trx, actor, { entity: 'oil_sample', entityId: id, action: 'attach', before: row.attachment_name, after: name })
    })
  } catch (e) {
    // The database lost around the commit: the sample names the new report or it does not.
    const landed = isUnavailableAnswer(e) ? await committedAfterLoss(db, async (q) => Boolean(await q('oil_samples').where({ id, attachment_key: key }).first('id'))) : false
    if (landed === false) await removeFile(key)
    if (!landed) throw e
  }
  if (previousKey) await removeFile(previousKey)
  return oilSample(db, actor, id)
}

export async function oilReport(db: Db, actor: Actor, id: number): Promise<{ data: Buffer; name: string }> {
  const row = await sampleRowFor(db, actor, id)
  if (!row.attachment_key) notFound('Report')
  const raw = await getFile(row.attachment_key)
  if (!raw) notFound('Report')
  return { data: raw, name: row.attachment_name ?? 'report.pdf' }
}
