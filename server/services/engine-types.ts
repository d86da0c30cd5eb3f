// Engine types: the supplier's catalogue of engines, read by its teams, changed by the supplier.
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { EngineTypeCreateSchema, EngineTypeUpdateSchema } from '#shared/schemas/fleet'
import type { EngineTypeDto } from '#shared/types/fleet'
import { canWriteCatalogue, catalogueOwner, scopeCatalogue, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { bumpLifeRevision, loadEngineTypes, toEngineType } from './fleet-data'
import { reclassifyOverRevs } from './over-revs'

const COLUMNS = {
  name: 'name', revLimitRpm: 'rev_limit_rpm', idleRpm: 'idle_rpm', bandWidthRpm: 'band_width_rpm', referenceRpm: 'reference_rpm',
  maxGapS: 'max_gap_s', reciprocatingMassKg: 'reciprocating_mass_kg', overRevBands: 'over_rev_bands', lowOilPressure: 'low_oil_pressure',
} as const

/** Engine types belong to the supplier; its teams read those of their supplier. */
export function listEngineTypes(db: Knex, actor: Actor): Promise<EngineTypeDto[]> {
  return loadEngineTypes(db, (qb) => scopeCatalogue(qb, actor))
}

export async function createEngineType(db: Knex, actor: Actor, input: z.infer<typeof EngineTypeCreateSchema>): Promise<EngineTypeDto> {
  const supplierId = catalogueOwner(actor)
  return db.transaction(async (trx) => {
    if (await trx('engine_types').where('code', input.code).first()) conflict(`An engine type with the code ${input.code} already exists`)
    const typeIds = [...new Set(input.positions.map((p) => p.componentTypeId))]
    const known = await trx('component_types').whereIn('id', typeIds).where('supplier_id', supplierId).pluck('id')
    input.positions.forEach((p, i) => {
      if (!known.includes(p.componentTypeId)) badRequest(`Invalid input: positions.${i}.componentTypeId: no component type ${p.componentTypeId} of this supplier`)
    })
    const [id] = await trx('engine_types').insert({
      supplier_id: supplierId,
      code: input.code,
      name: input.name,
      series: input.series,
      cylinders: input.cylinders,
      layout: input.layout,
      bore_mm: input.boreMm,
      stroke_mm: input.strokeMm,
      conrod_mm: input.conrodMm,
      reciprocating_mass_kg: input.reciprocatingMassKg,
      rev_limit_rpm: input.revLimitRpm,
      idle_rpm: input.idleRpm,
      band_width_rpm: input.bandWidthRpm,
      reference_rpm: input.referenceRpm,
      max_gap_s: input.maxGapS,
      over_rev_bands: JSON.stringify(input.overRevBands),
      low_oil_pressure: JSON.stringify(input.lowOilPressure),
    })
    await trx('engine_type_positions').insert(input.positions.map((p, i) => ({ engine_type_id: id, position: p.position, label: p.label, component_type_id: p.componentTypeId, sort: i })))
    const row = await trx('engine_types').where('id', id).first()
    const positions = await trx('engine_type_positions').where('engine_type_id', id)
    const dto = toEngineType(row, positions)
    await audit(trx, actor, { entity: 'engine_type', entityId: id!, action: 'create', after: dto })
    return dto
  })
}

/** A change of bands re-reads the stored over-revs; any change moves life, which is derived at read time. */
export async function updateEngineType(db: Knex, actor: Actor, id: number, input: z.infer<typeof EngineTypeUpdateSchema>, auditNote?: Record<string, unknown>): Promise<EngineTypeDto> {
  return db.transaction(async (trx) => {
    const before = await trx('engine_types').where('id', id).forUpdate().first()
    if (!before || !canWriteCatalogue(actor, before.supplier_id)) notFound('Engine type')
    const patch: Record<string, unknown> = { updated_at: new Date() }
    for (const [key, value] of Object.entries(input)) {
      const column = COLUMNS[key as keyof typeof COLUMNS]
      patch[column] = typeof value === 'object' && value !== null ? JSON.stringify(value) : value
    }
    const referenceRpm = input.referenceRpm ?? before.reference_rpm
    if (referenceRpm <= 0) badRequest('Invalid input: referenceRpm: must be above zero')
    await trx('engine_types').where('id', id).update(patch)
    const after = await trx('engine_types').where('id', id).first()
    await audit(trx, actor, { entity: 'engine_type', entityId: id, action: 'update', before: toEngineType(before), after: { ...toEngineType(after), ...auditNote } })
    if (input.overRevBands) await reclassifyOverRevs(trx, actor, id, input.overRevBands)
    await bumpLifeRevision(trx)
    const positions = await trx('engine_type_positions').where('engine_type_id', id)
    return toEngineType(after, positions)
  })
}
