import { z } from 'zod'
import { bumpLifeRevision } from '../../../../services/fleet-data'
import { engineRowFor } from '../../../../services/fleet-scope'

const Params = z.object({ id: z.coerce.number().int().positive(), engineId: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'team_manager'])
  const { id, engineId } = readValidParams(event, Params)
  return useDb().transaction(async (trx) => {
    await engineRowFor(trx, actor, engineId)
    const before = await trx('event_plans').where({ event_id: id, engine_id: engineId }).first()
    if (!before) notFound('Assignment')
    await trx('event_plans').where('id', before.id).delete()
    await audit(trx, actor, { entity: 'event_plan', entityId: `${id}:${engineId}`, action: 'unassign', before })
    await bumpLifeRevision(trx)
    return { ok: true }
  })
})
