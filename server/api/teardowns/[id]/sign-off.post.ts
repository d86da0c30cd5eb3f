import { SignOffSchema, TEARDOWN_SIGNERS } from '#shared/schemas/teardown'
import { signOffTeardown } from '../../../services/teardowns/sign-off'

// The second person's sign-off: the engine goes back to active with a new build.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_SIGNERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, SignOffSchema)
  return callInTransaction(signOffTeardown, actor, id, input)
})
