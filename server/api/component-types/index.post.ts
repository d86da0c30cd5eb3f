import { SUPPLIER_ROLES } from '#shared/roles'
import { ComponentTypeCreateSchema } from '#shared/schemas/fleet'
import { toComponentType } from '../../services/fleet-data'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const input = await readValidBody(event, ComponentTypeCreateSchema)
  return useDb().transaction(async (trx) => {
    if (await trx('component_types').where('code', input.code).first()) conflict(`A component type with the code ${input.code} already exists`)
    const [id] = await trx('component_types').insert({
      supplier_id: actor.supplierId,
      code: input.code,
      name: input.name,
      category: input.category,
      limit_hours: input.limitHours,
      limit_km: input.limitKm,
      limit_eq_hours: input.limitEqHours,
      limit_over_rev: JSON.stringify(input.limitOverRev),
      immediate_inspection_band: input.immediateInspectionBand,
      warning_level: input.warningLevel,
      due_level: input.dueLevel,
      damage_exponent: input.damageExponent,
      characteristics: JSON.stringify(input.characteristics),
    })
    const row = await trx('component_types').where('id', id).first()
    await audit(trx, actor, { entity: 'component_type', entityId: id!, action: 'create', after: toComponentType(row) })
    setResponseStatus(event, 201)
    return toComponentType(row)
  })
})
