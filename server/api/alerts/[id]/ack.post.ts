import { ANY_ROLE } from '#shared/roles'
import { AlertAckSchema } from '#shared/schemas/alerts'
import { acknowledgeAlert } from '../../../services/alerts'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const { id } = readValidParams(event, IdParams)
  const { comment } = await readValidBody(event, AlertAckSchema)
  return callService(acknowledgeAlert, actor, id, comment)
})
