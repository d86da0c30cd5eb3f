import { CONCESSION_GRANTERS, ConcessionSchema } from '#shared/schemas/part'
import { grantConcession } from '../../../services/concessions'

// Release a quarantined or over-limit part after inspection, optionally with a new limit for its serial.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, CONCESSION_GRANTERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, ConcessionSchema)
  const result = await callService(grantConcession, actor, id, input)
  setResponseStatus(event, 201)
  return result
})
