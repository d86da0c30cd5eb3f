// Component types: the supplier's life limits per kind of part, read by its teams, changed by the supplier.
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { ComponentTypeCreateSchema, ComponentTypeUpdateSchema } from '#shared/schemas/fleet'
import type { ComponentTypeDto } from '#shared/types/fleet'
import { canWriteCatalogue, catalogueOwner, scopeCatalogue, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { bumpLifeRevision, loadComponentTypes, toComponentType } from './fleet-data'

const COLUMNS = {
  name: 'name', limitHours: 'limit_hours', limitKm: 'limit_km', limitEqHours: 'limit_eq_hours', limitOverRev: 'limit_over_rev',
  immediateInspectionBand: 'immediate_inspection_band', warningLevel: 'warning_level', dueLevel: 'due_level', damageExponent: 'damage_exponent',
  characteristics: 'characteristics',
} as const
const JSON_COLUMNS = new Set(['limitOverRev', 'characteristics'])

export function listComponentTypes(db: Knex, actor: Actor): Promise<ComponentTypeDto[]> {
  return loadComponentTypes(db, (qb) => scopeCatalogue(qb, actor))
}

export async function createComponentType(db: Knex, actor: Actor, input: z.infer<typeof ComponentTypeCreateSchema>): Promise<ComponentTypeDto> {
  return db.transaction(async (trx) => {
    if (await trx('component_types').where('code', input.code).first()) conflict(`A component type with the code ${input.code} already exists`)
    const [id] = await trx('component_types').insert({
      supplier_id: catalogueOwner(actor),
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
    return toComponentType(row)
  })
}

/** A limit change moves the life of every part of this type at once: life is derived at read time. */
export async function updateComponentType(db: Knex, actor: Actor, id: number, input: z.infer<typeof ComponentTypeUpdateSchema>, auditNote?: Record<string, unknown>): Promise<ComponentTypeDto> {
  return db.transaction(async (trx) => {
    const before = await trx('component_types').where('id', id).forUpdate().first()
    if (!before || !canWriteCatalogue(actor, before.supplier_id)) notFound('Component type')
    const warning = input.warningLevel ?? Number(before.warning_level)
    const due = input.dueLevel ?? Number(before.due_level)
    if (warning >= due) badRequest('Invalid input: dueLevel: must be above the warning level')
    if (input.characteristics) await keepRecordedReadings(trx, id, toComponentType(before).characteristics, input.characteristics)
    const patch: Record<string, unknown> = { updated_at: new Date() }
    for (const [key, value] of Object.entries(input)) {
      patch[COLUMNS[key as keyof typeof COLUMNS]] = JSON_COLUMNS.has(key) ? JSON.stringify(value) : value
    }
    await trx('component_types').where('id', id).update(patch)
    const after = await trx('component_types').where('id', id).first()
    await audit(trx, actor, { entity: 'component_type', entityId: id, action: 'update-limits', before: toComponentType(before), after: { ...toComponentType(after), ...auditNote } })
    await bumpLifeRevision(trx)
    return toComponentType(after)
  })
}

/** Teardown readings keep their meaning: a characteristic with readings is neither dropped nor given another unit (409). */
async function keepRecordedReadings(trx: Knex.Transaction, typeId: number, before: { key: string; unit: string }[], after: { key: string; unit: string }[]) {
  const changed = before.filter((b) => after.find((a) => a.key === b.key)?.unit !== b.unit)
  if (!changed.length) return
  const used: { key: string; n: number | string }[] = await trx('teardown_measurements as m')
    .join('components as c', 'c.id', 'm.component_id')
    .where('c.component_type_id', typeId)
    .whereIn('m.characteristic_key', changed.map((c) => c.key))
    .groupBy('m.characteristic_key')
    .select('m.characteristic_key as key')
    .count({ n: '*' })
  if (used.length) {
    const what = used.map((u) => `${u.key} (${u.n} reading${Number(u.n) === 1 ? '' : 's'})`).join(', ')
    conflict(`Invalid input: characteristics: ${what} already recorded at teardowns; keep the key and its unit`)
  }
}
