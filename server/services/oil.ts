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
import Papa from 'papaparse'
import { DEFAULT_OIL_LIMITS, populationLimits, type OilLimits, type OilReason, type OilSampleValues, type OilStatus } from '#shared/domain/oil/limits'
import { oilSampleSchema } from '#shared/domain/oil/schema'
import { assessEngineHistory, assessLatest, leaveOneOutLimits } from '#shared/domain/oil/history'
import { DEFAULT_PARTICLE_BASIS, PARTICLE_BASES, applyMapping, countsPerMl, headerSignature, mappingProblems, type OilCsvMapping, type ParticleBasis } from '#shared/domain/oil/lab-csv'
import { OilLimitsSchema } from '#shared/schemas/oil'
import type { OilEngineDto, OilEngineStatusDto, OilImportResult, OilLabMappingDto, OilLimitsDto, OilSampleDto } from '#shared/types/oil'
import { canSee, scopeQuery } from '../utils/guard'
import { badRequest, conflict, notFound, zodMessage } from '../utils/errors'
import { iso, json } from '../utils/db'
import { audit } from '../utils/audit'
import { engineRowFor } from './engine-rows'
import { bumpLifeRevision } from './fleet-data'
import { insertSamples, sampleUpdateRow, sampleValues, type SampleRow } from './oil-rows'

type Db = Knex | Knex.Transaction

export const PDF_MAX_BYTES = 10 * 1024 * 1024
const STORAGE = 'files'

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

function sampleIssues(error: ZodError) {
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
export async function updateOilSample(db: Knex, actor: Actor, id: number, lab: string | null, input: unknown, now = new Date()): Promise<OilSampleDto> {
  await db.transaction(async (trx) => {
    // Oil status shows on the board, which is cached per life revision.
    await bumpLifeRevision(trx)
    const row = await sampleRowFor(trx, actor, id, { forUpdate: true })
    const engine = await trx('engines').where('id', row.engine_id).first('built_at')
    const values = await validSample(trx, engine, input, now, id)
    await trx('oil_samples').where('id', id).update(sampleUpdateRow(values, lab))
    await audit(trx, actor, { entity: 'oil_sample', entityId: id, action: 'update', before: { lab: row.lab, ...sampleValues(row) }, after: { lab, ...values } })
  })
  return oilSample(db, actor, id)
}

export interface ImportRowIssue {
  row: number
  line: number
  field: string
  message: string
}

/**
 * Lab CSV import: every row is checked first and the file is stored in one
 * transaction only when all rows pass, so a bad row leaves nothing behind.
 * Rows are numbered from 1 after the header (line = row + 1).
 */
export async function importOilCsv(db: Knex, actor: Actor, input: { lab: string; csv: string; mapping: OilCsvMapping; particleBasis?: ParticleBasis; saveMapping?: boolean }, now = new Date()): Promise<OilImportResult> {
  const basis = input.particleBasis ?? DEFAULT_PARTICLE_BASIS
  const parsed = Papa.parse<string[]>(input.csv.replace(/^\uFEFF/, ''), { header: false, skipEmptyLines: 'greedy' })
  const table = parsed.data
  if (table.length < 2) badRequest('csv: the file needs a header row and at least one sample row')
  const headers = table[0]!.map((h) => h.trim())
  const problems = mappingProblems(headers, input.mapping)
  if (problems.length) badRequest(problems.join('; '), { issues: problems.map((p) => ({ row: 0, line: 1, field: 'mapping', message: p })) })

  return db.transaction(async (trx) => {
    // Oil status shows on the board, which is cached per life revision.
    await bumpLifeRevision(trx)
    const engineQb = trx('engines').select('id', 'serial', 'built_at', 'supplier_id', 'team_id')
    scopeQuery(engineQb, actor, { supplier: 'supplier_id', team: 'team_id' })
    const engines = new Map((await engineQb).map((e: any) => [String(e.serial).toUpperCase(), e]))

    const columnOf = new Map(Object.entries(input.mapping).filter(([, f]) => f !== 'ignore').map(([c, f]) => [f as string, c]))
    const issues: ImportRowIssue[] = []
    const good: { engineId: number; values: OilSampleValues; lab: string; source: 'csv' }[] = []
    const seenIds = new Map<string, number>()
    for (let i = 1; i < table.length; i++) {
      const row = i
      const line = i + 1
      const cells = table[i]!
      if (cells.length !== headers.length) {
        issues.push({ row, line, field: 'row', message: `has ${cells.length} cells where the header has ${headers.length}` })
        continue
      }
      // Counts are stored per mL, the basis of the ISO 4406 table, whatever the lab printed.
      const record = countsPerMl(applyMapping(headers, cells, input.mapping), basis)
      const serial = (record.engineSerial ?? '').toUpperCase()
      const engine = engines.get(serial)
      if (!engine) {
        issues.push({ row, line, field: 'engineSerial', message: serial ? `unknown engine serial ${record.engineSerial}` : 'engineSerial is empty' })
        continue
      }
      const { engineSerial: _serial, ...sample } = record
      const result = oilSampleSchema({ now, builtAt: engine.built_at ? new Date(engine.built_at) : null }).safeParse(sample)
      if (!result.success) {
        for (const is of sampleIssues(result.error)) {
          // Name the field as the mapping does (Fe, not elements.Fe) and the lab's column it came from.
          const field = is.path.replace(/^elements\./, '')
          const column = columnOf.get(field)
          issues.push({ row, line, field, message: column ? `${is.message} (column "${column}")` : is.message })
        }
        continue
      }
      const values = result.data
      const earlier = seenIds.get(values.sampleId)
      if (earlier !== undefined) {
        issues.push({ row, line, field: 'sampleId', message: `sample ${values.sampleId} appears again (first in row ${earlier})` })
        continue
      }
      seenIds.set(values.sampleId, row)
      good.push({ engineId: engine.id, values, lab: input.lab, source: 'csv' })
    }
    if (seenIds.size) {
      const existing = await trx('oil_samples').whereIn('sample_id', [...seenIds.keys()]).pluck('sample_id')
      for (const sid of existing) {
        const row = seenIds.get(sid)!
        issues.push({ row, line: row + 1, field: 'sampleId', message: `sample ${sid} is already recorded` })
      }
    }
    if (issues.length) {
      issues.sort((a, b) => a.row - b.row)
      const head = issues.slice(0, 3).map((is) => `row ${is.row} (line ${is.line}), ${is.field}: ${is.message}`).join('; ')
      const more = issues.length > 3 ? ` (and ${issues.length - 3} more)` : ''
      badRequest(`Nothing imported: ${head}${more}`, { issues })
    }
    await insertSamples(trx, good, actor.id)
    await audit(trx, actor, { entity: 'oil_import', entityId: input.lab, action: 'create', after: { lab: input.lab, rows: good.length, particleBasis: basis, sampleIds: good.map((g) => g.values.sampleId) } })
    if (input.saveMapping) await upsertMapping(trx, actor, input.lab, headers, input.mapping, basis)
    return { imported: good.length, sampleIds: good.map((g) => g.values.sampleId) }
  })
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
  if (key) await useStorage(STORAGE).removeItem(key)
}

// -------------------------------------------------------------- mappings

async function upsertMapping(trx: Knex.Transaction, actor: Actor, lab: string, headers: string[], mapping: OilCsvMapping, basis: ParticleBasis) {
  const row = { header_signature: headerSignature(headers), mapping: JSON.stringify(mapping), particle_basis: basis, updated_by: actor.id, updated_at: new Date() }
  const existing = await scopeOwnOrganisation(trx('oil_lab_mappings'), actor, 'organisation_id').where({ lab }).forUpdate().first('id')
  if (existing) await trx('oil_lab_mappings').where('id', existing.id).update(row)
  else await trx('oil_lab_mappings').insert({ organisation_id: ownOrganisation(actor), lab, ...row })
}

export async function saveOilMapping(db: Knex, actor: Actor, input: { lab: string; headers: string[]; mapping: OilCsvMapping; particleBasis?: ParticleBasis }) {
  const problems = mappingProblems(input.headers, input.mapping)
  if (problems.length) badRequest(problems.join('; '))
  const basis = input.particleBasis ?? DEFAULT_PARTICLE_BASIS
  await db.transaction(async (trx) => {
    await upsertMapping(trx, actor, input.lab, input.headers, input.mapping, basis)
    await audit(trx, actor, { entity: 'oil_lab_mapping', entityId: input.lab, action: 'update', after: { mapping: input.mapping, particleBasis: basis } })
  })
  return (await oilMappings(db, actor)).find((m) => m.lab === input.lab)!
}

/** The actor's organisation's saved lab layouts. */
export async function oilMappings(db: Db, actor: Actor) {
  const rows = await scopeOwnOrganisation(db('oil_lab_mappings'), actor, 'organisation_id').orderBy('lab')
  return rows.map((r): OilLabMappingDto => ({
    id: r.id as number,
    lab: r.lab as string,
    headerSignature: r.header_signature as string,
    mapping: json<OilCsvMapping>(r.mapping, {}),
    particleBasis: (PARTICLE_BASES as readonly string[]).includes(r.particle_basis) ? (r.particle_basis as ParticleBasis) : DEFAULT_PARTICLE_BASIS,
    updatedAt: iso(r.updated_at),
  }))
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
  const storage = useStorage(STORAGE)
  await storage.setItemRaw(key, file.data)
  let previousKey: string | null = null
  try {
    await db.transaction(async (trx) => {
      const row = await sampleRowFor(trx, actor, id, { forUpdate: true })
      previousKey = row.attachment_key
      await trx('oil_samples').where('id', id).update({ attachment_key: key, attachment_name: name, attachment_size: file.data.length })
      await audit(trx, actor, { entity: 'oil_sample', entityId: id, action: 'attach', before: row.attachment_name, after: name })
    })
  } catch (e) {
    await storage.removeItem(key)
    throw e
  }
  if (previousKey) await storage.removeItem(previousKey)
  return oilSample(db, actor, id)
}

export async function oilReport(db: Db, actor: Actor, id: number): Promise<{ data: Buffer; name: string }> {
  const row = await sampleRowFor(db, actor, id)
  if (!row.attachment_key) notFound('Report')
  const raw = await useStorage(STORAGE).getItemRaw(row.attachment_key)
  if (!raw) notFound('Report')
  return { data: Buffer.isBuffer(raw) ? raw : Buffer.from(raw as ArrayBuffer), name: row.attachment_name ?? 'report.pdf' }
}
