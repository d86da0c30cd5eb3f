import { TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { reopenTeardown } from '../../../services/teardowns/sign-off'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id } = readValidParams(event, IdParams)
  return callInTransaction(reopenTeardown, actor, id)
})
