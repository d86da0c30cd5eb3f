import { SUPPLIER_ROLES } from '#shared/roles'
import { ComponentTypeUpdateSchema } from '#shared/schemas/fleet'
import { bumpLifeRevision, toComponentType } from '../../services/fleet-data'

const COLUMNS = {
  name: 'name', limitHours: 'limit_hours', limitKm: 'limit_km', limitEqHours: 'limit_eq_hours', limitOverRev: 'limit_over_rev',
  immediateInspectionBand: 'immediate_inspection_band', warningLevel: 'warning_level', dueLevel: 'due_level', damageExponent: 'damage_exponent',
} as const

// A limit change moves the life of every part of this type at once: life is derived at read time.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, ComponentTypeUpdateSchema)
  return useDb().transaction(async (trx) => {
    const before = await trx('component_types').where('id', id).forUpdate().first()
    if (!before || (actor.role !== 'admin' && before.supplier_id !== actor.organisationId)) notFound('Component type')
    const warning = input.warningLevel ?? Number(before.warning_level)
    const due = input.dueLevel ?? Number(before.due_level)
    if (warning >= due) badRequest('Invalid input: dueLevel: must be above the warning level')
    const patch: Record<string, unknown> = { updated_at: new Date() }
    for (const [key, value] of Object.entries(input)) {
      patch[COLUMNS[key as keyof typeof COLUMNS]] = key === 'limitOverRev' ? JSON.stringify(value) : value
    }
    await trx('component_types').where('id', id).update(patch)
    const after = await trx('component_types').where('id', id).first()
    await audit(trx, actor, { entity: 'component_type', entityId: id, action: 'update-limits', before: toComponentType(before), after: toComponentType(after) })
    await bumpLifeRevision(trx)
    return toComponentType(after)
  })
})
