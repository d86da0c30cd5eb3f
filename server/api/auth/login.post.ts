import { SignInSchema } from '#shared/schemas/user'
import { clearFailures, recordFailure, signInKeys, throttleWait } from '../../utils/throttle'

// Public by nature: the one route that creates a session.
export default defineEventHandler(async (event) => {
  const { email, password } = await readValidBody(event, SignInSchema)
  const db = useDb()
  const ip = getRequestIP(event, { xForwardedFor: false }) ?? 'unknown'
  const keys = signInKeys(email, ip)

  const wait = await throttleWait(db, keys)
  if (wait > 0) {
    throw createError({
      statusCode: 429,
      statusMessage: 'Too Many Requests',
      message: `Too many failed sign-ins. Try again in ${Math.ceil(wait / 60)} minute(s).`,
    })
  }

  const user = await db('users').where({ email }).first()
  const ok = user ? await verifyPassword(user.password_hash, password) : false
  if (!user || !ok || !user.active) {
    await recordFailure(db, keys)
    const message = user && ok && !user.active ? 'This account is deactivated: ask your team manager or an admin.' : 'E-mail or password is wrong.'
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message })
  }
  await clearFailures(db, keys)
  // A fresh sealed cookie at every sign-in (the old one, if any, is replaced).
  await replaceUserSession(event, { user: { id: user.id, sessionVersion: user.session_version }, loggedInAt: Date.now() })
  return { ok: true }
})
