import { ANY_ROLE } from '#shared/roles'
import { signOutEverywhere } from '../../services/account'

// Sign out everywhere: ends every session of the signed-in user, this one included, on every instance.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const result = await callService(signOutEverywhere, actor)
  await clearUserSession(event)
  return result
})
