// Signing in: the one place that checks a password and starts a session row.
import type { Knex } from 'knex'
import { endSession, startSession } from '../utils/auth-session'
import { clearFailures, keysToCheck, recordFailure, rememberAddress, signedInFrom, signInKeys, throttleWait } from '../utils/throttle'

// One answer for every refused sign-in: an unknown e-mail, a wrong password and a deactivated
// account (right password or not) cannot be told apart by status, message or timing.
const REFUSED = 'E-mail or password is wrong.'

// A password is checked against this hash when the e-mail is unknown, so that answer takes as
// long as a wrong password does.
let dummyHash: Promise<string> | undefined
const hashForUnknown = () => (dummyHash ??= hashPassword(`no-such-account-${Math.random()}`))

export interface SignInRequest {
  address: string
  userAgent: string | undefined
  /** The session this browser held, read only once the password is right (reading it may set a cookie). */
  previousSession: () => Promise<string | undefined>
}

/** Checks the credentials (throttled per account and address) and starts a session; answers what the cookie seals. */
export async function signIn(db: Knex, credentials: { email: string; password: string }, request: SignInRequest) {
  const { email, password } = credentials
  const keys = signInKeys(email, request.address)
  const user = await db('users').where({ email }).first()

  // (the same reads for an unknown e-mail as for a known one)
  const known = await signedInFrom(db, user?.id ?? 0, request.address)
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
  await rememberAddress(db, user.id, request.address)

  // A sign-in in a browser that held a session ends that one (its cookie is replaced).
  const previous = await request.previousSession()
  if (previous) await endSession(db, previous, 'replaced')
  const sid = await startSession(db, user.id, { address: request.address, userAgent: request.userAgent })
  return { user: { id: user.id as number, sessionVersion: user.session_version as number }, sid }
}
