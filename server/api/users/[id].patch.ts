import { USER_MANAGERS } from '#shared/roles'
import { UserUpdateSchema } from '#shared/schemas/user'
import { updateUser } from '../../services/users'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, USER_MANAGERS)
  const { id } = readValidParams(event, IdParams)
  const input = await readValidBody(event, UserUpdateSchema)
  return callService(updateUser, actor, id, input)
})
