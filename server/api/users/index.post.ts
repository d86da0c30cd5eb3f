import { USER_MANAGERS } from '#shared/roles'
import { UserCreateSchema } from '#shared/schemas/user'
import { createUser } from '../../services/users'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, USER_MANAGERS)
  const input = await readValidBody(event, UserCreateSchema)
  const user = await callService(createUser, actor, input)
  setResponseStatus(event, 201)
  return user
})
