import { SUPPLIER_ROLES } from '#shared/roles'
import { EventCreateSchema } from '#shared/schemas/fleet'
import { bumpLifeRevision, toEventDto } from '../../services/fleet-data'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SUPPLIER_ROLES)
  const input = await readValidBody(event, EventCreateSchema)
  return useDb().transaction(async (trx) => {
    const [id] = await trx('events').insert({
      supplier_id: actor.supplierId,
      name: input.name,
      series: input.series,
      track: input.track,
      track_length_km: input.trackLengthKm,
      starts_at: new Date(input.startsAt),
      ends_at: new Date(input.endsAt),
      planned_seconds: input.plannedSeconds,
      planned_km: input.plannedKm,
    })
    await audit(trx, actor, { entity: 'event', entityId: id!, action: 'create', after: input })
    await bumpLifeRevision(trx)
    setResponseStatus(event, 201)
    return toEventDto(await trx('events').where('id', id).first())
  })
})
