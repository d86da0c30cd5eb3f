import { ANY_ROLE } from '#shared/roles'
import type { SessionCookie } from '../utils/auth-session'

// nuxt-auth-utils clears the cookie in three places: POST /api/auth/logout, the guard (a session
// that has ended), and its own DELETE /api/_auth/session. Each clear ends the session's row too,
// so a copy of the cookie kept elsewhere stops working on every instance.
// Its GET /api/_auth/session answers only for a live session, and never shows the session id.
export default defineNitroPlugin(() => {
  sessionHooks.hook('clear', async (session: SessionCookie) => {
    if (typeof session?.sid === 'string') await endSession(useDb(), session.sid, 'sign-out')
  })
  sessionHooks.hook('fetch', async (session: SessionCookie & Record<string, unknown>, event) => {
    await requireActor(event, ANY_ROLE)
    delete session.sid
  })
})
