import { SESSION_WRITERS } from '#shared/roles'
import { deleteOilSample } from '../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, IdParams)
  await callService(deleteOilSample, actor, id)
  setResponseStatus(event, 204)
  return null
})
