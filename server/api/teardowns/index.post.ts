import { TEARDOWN_WORKERS, TeardownStartSchema } from '#shared/schemas/teardown'
import { startTeardown } from '../../services/teardowns/sheet'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const input = await readValidBody(event, TeardownStartSchema)
  const result = await callInTransaction(startTeardown, actor, input, { publicUrl: useRuntimeConfig().publicUrl })
  setResponseStatus(event, 201)
  return result
})
