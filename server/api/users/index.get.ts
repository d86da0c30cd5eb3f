import { USER_MANAGERS } from '#shared/roles'
import { listUsers } from '../../services/users'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, USER_MANAGERS)
  return callService(listUsers, actor)
})
