import { SUPPLIER_ROLES } from '#shared/roles'
import { EngineTypeCreateSchema } from '#shared/schemas/fleet'
import { toEngineType } from '../../services/fleet-data'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const input = await readValidBody(event, EngineTypeCreateSchema)
  return useDb().transaction(async (trx) => {
    if (await trx('engine_types').where('code', input.code).first()) conflict(`An engine type with the code ${input.code} already exists`)
    const typeIds = [...new Set(input.positions.map((p) => p.componentTypeId))]
    const known = await trx('component_types').whereIn('id', typeIds).where('supplier_id', actor.supplierId).pluck('id')
    input.positions.forEach((p, i) => {
      if (!known.includes(p.componentTypeId)) badRequest(`Invalid input: positions.${i}.componentTypeId: no component type ${p.componentTypeId} of this supplier`)
    })
    const [id] = await trx('engine_types').insert({
      supplier_id: actor.supplierId,
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
    setResponseStatus(event, 201)
    return dto
  })
})
