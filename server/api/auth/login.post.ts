import { SignInSchema } from '#shared/schemas/user'
import type { SessionCookie } from '../../utils/auth-session'
import { clearFailures, keysToCheck, recordFailure, rememberAddress, signedInFrom, signInKeys, throttleWait } from '../../utils/throttle'

// One answer for every refused sign-in: an unknown e-mail, a wrong password and a deactivated
// account (right password or not) cannot be told apart by status, message or timing.
const REFUSED = 'E-mail or password is wrong.'

// A password is checked against this hash when the e-mail is unknown, so that answer takes as
// long as a wrong password does.
let dummyHash: Promise<string> | undefined
const hashForUnknown = () => (dummyHash ??= hashPassword(`no-such-account-${Math.random()}`))

// Public by nature: the one route that creates a session.
export default defineEventHandler(async (event) => {
  const { email, password } = await readValidBody(event, SignInSchema)
  const db = useDb()
  const address = clientAddress(event)
  const keys = signInKeys(email, address)
  const user = await db('users').where({ email }).first()

  // (the same reads for an unknown e-mail as for a known one)
  const known = await signedInFrom(db, user?.id ?? 0, address)
  const wait = await throttleWait(db, keysToCheck(keys, known))
  if (wait > 0) {
    throw createError({
      statusCode: 429,
      statusMessage: 'Too Many Requests',
      message: `Too many failed sign-ins. Try again in ${Math.ceil(wait / 60)} minute(s).`,
    })
  }

  // Always one password check, whoever asks.
  const ok = await verifyPassword(user?.password_hash ?? (await hashForUnknown()), password)
  if (!user || !ok || !user.active) {
    await recordFailure(db, keys)
    throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: REFUSED })
  }
  await clearFailures(db, keys)
  await rememberAddress(db, user.id, address)

  // A sign-in in a browser that held a session ends that one (its cookie is replaced).
  const previous = (await getUserSession(event)) as SessionCookie
  if (typeof previous.sid === 'string') await endSession(db, previous.sid, 'replaced')
  const sid = await startSession(db, user.id, { address, userAgent: getRequestHeader(event, 'user-agent') })
  await replaceUserSession(event, { user: { id: user.id, sessionVersion: user.session_version }, sid, loggedInAt: Date.now() } satisfies SessionCookie)
  return { ok: true }
})
