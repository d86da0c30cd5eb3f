import { SUPPLIER_ROLES } from '#shared/roles'
import { EngineTypeUpdateSchema } from '#shared/schemas/fleet'
import { bumpLifeRevision, toEngineType } from '../../services/fleet-data'
import { reclassifyOverRevs } from '../../services/over-revs'

const COLUMNS = {
  name: 'name', revLimitRpm: 'rev_limit_rpm', idleRpm: 'idle_rpm', bandWidthRpm: 'band_width_rpm', referenceRpm: 'reference_rpm',
  maxGapS: 'max_gap_s', reciprocatingMassKg: 'reciprocating_mass_kg', overRevBands: 'over_rev_bands', lowOilPressure: 'low_oil_pressure',
} as const

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, EngineTypeUpdateSchema)
  return useDb().transaction(async (trx) => {
    const before = await trx('engine_types').where('id', id).forUpdate().first()
    if (!before || (actor.role !== 'admin' && before.supplier_id !== actor.organisationId)) notFound('Engine type')
    const patch: Record<string, unknown> = { updated_at: new Date() }
    for (const [key, value] of Object.entries(input)) {
      const column = COLUMNS[key as keyof typeof COLUMNS]
      patch[column] = typeof value === 'object' && value !== null ? JSON.stringify(value) : value
    }
    const referenceRpm = input.referenceRpm ?? before.reference_rpm
    if (referenceRpm <= 0) badRequest('Invalid input: referenceRpm: must be above zero')
    await trx('engine_types').where('id', id).update(patch)
    const after = await trx('engine_types').where('id', id).first()
    await audit(trx, actor, { entity: 'engine_type', entityId: id, action: 'update', before: toEngineType(before), after: toEngineType(after) })
    if (input.overRevBands) await reclassifyOverRevs(trx, actor, id, input.overRevBands)
    await bumpLifeRevision(trx)
    const positions = await trx('engine_type_positions').where('engine_type_id', id)
    return toEngineType(after, positions)
  })
})
