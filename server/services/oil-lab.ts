// Lab files: a lab's CSV export stored whole or not at all, and the layouts saved per lab for the next file.
import type { Knex } from 'knex'
import Papa from 'papaparse'
import type { OilSampleValues } from '#shared/domain/oil/limits'
import { oilSampleSchema } from '#shared/domain/oil/schema'
import { DEFAULT_PARTICLE_BASIS, PARTICLE_BASES, applyMapping, countsPerMl, headerSignature, mappingProblems, type OilCsvMapping, type ParticleBasis } from '#shared/domain/oil/lab-csv'
import type { OilImportResult, OilLabMappingDto } from '#shared/types/oil'
import { ownOrganisation, scopeOwnOrganisation, scopeQuery, type Actor } from '../utils/guard'
import { badRequest } from '../utils/errors'
import { iso, json } from '../utils/db'
import { audit } from '../utils/audit'
import { bumpLifeRevision } from './fleet-data'
import { insertSamples } from '../../db/oil-samples'
import { sampleIssues } from './oil'

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
export async function oilMappings(db: Knex | Knex.Transaction, actor: Actor) {
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
