import { ANY_ROLE } from '#shared/roles'

// Sign out everywhere: ends every session of the signed-in user, this one included, on every instance.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  const db = useDb()
  const ended = await endUserSessions(db, actor.id, 'everywhere')
  await audit(db, actor, { entity: 'user', entityId: actor.id, action: 'sign-out-everywhere', after: { sessions: ended } })
  await clearUserSession(event)
  return { ended }
})
