import { SignInSchema } from '#shared/schemas/user'
import type { SessionCookie } from '../../utils/auth-session'
import { signIn } from '../../services/sign-in'

// Public by nature: the one route that creates a session.
export default defineEventHandler(async (event) => {
  const credentials = await readValidBody(event, SignInSchema)
  const request = { address: clientAddress(event), userAgent: getRequestHeader(event, 'user-agent'), previousSession: () => sessionIdOf(event) }
  const { user, sid } = await callService(signIn, credentials, request)
  await replaceUserSession(event, { user, sid, loggedInAt: Date.now() } satisfies SessionCookie)
  return { ok: true }
})
