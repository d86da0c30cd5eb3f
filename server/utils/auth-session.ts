import { randomBytes } from 'node:crypto'
import type { H3Event } from 'h3'
import type { Knex } from 'knex'

/**
 * Server-side sign-in sessions (table `auth_sessions`). A sign-in writes one row and seals its
 * random id into the cookie; the guard reads that row by primary key on every request. A session
 * ends when its row is ended (sign-out, sign out everywhere, a new role or password, deactivation)
 * or when it is idle or past its absolute lifetime; every instance sees it at once, since the row
 * is in the shared database. The sealed cookie alone no longer grants anything.
 */

export type SessionEndReason = 'sign-out' | 'everywhere' | 'replaced' | 'idle' | 'expired' | 'role' | 'password' | 'deactivated'

/** What the sealed cookie holds. */
export interface SessionCookie {
  user?: { id?: number; sessionVersion?: number }
  sid?: string
  loggedInAt?: number
}

export interface SessionLimits {
  /** Ends a session with no request for this long. */
  idleMs: number
  /** Ends a session this long after sign-in, however active. */
  absoluteMs: number
}

/** From runtimeConfig: `sessionIdleTimeout` and `session.maxAge`, both in seconds (see README). */
export function sessionLimits(): SessionLimits {
  const config = useRuntimeConfig()
  const idle = Number(config.sessionIdleTimeout)
  const absolute = Number((config.session as { maxAge?: number } | undefined)?.maxAge)
  return {
    idleMs: (Number.isFinite(idle) && idle > 0 ? idle : 30 * 60) * 1000,
    absoluteMs: (Number.isFinite(absolute) && absolute > 0 ? absolute : 12 * 3600) * 1000,
  }
}

/**
 * How stale `last_seen_at` may get before a request writes it again: a minute, or a tenth of the
 * idle timeout when that is shorter. Most requests therefore only read the row.
 */
export function touchIntervalMs(limits: SessionLimits) {
  return Math.max(1000, Math.min(60_000, Math.floor(limits.idleMs / 10)))
}

/** Why a session row no longer grants access, or null while it is live. */
export function sessionEndedBy(row: { ended_at: Date | string | null; last_seen_at: Date | string; expires_at: Date | string }, limits: SessionLimits, now = Date.now()): SessionEndReason | 'ended' | null {
  if (row.ended_at) return 'ended'
  if (new Date(row.expires_at).getTime() <= now) return 'expired'
  if (new Date(row.last_seen_at).getTime() + limits.idleMs <= now) return 'idle'
  return null
}

/** Writes a new session row for a user who has just proved who they are; answers its id. */
export async function startSession(db: Knex, userId: number, info: { address: string; userAgent: string | undefined }, now = new Date()): Promise<string> {
  const limits = sessionLimits()
  const id = randomBytes(32).toString('base64url')
  await db('auth_sessions').insert({
    id,
    user_id: userId,
    created_at: now,
    last_seen_at: now,
    expires_at: new Date(now.getTime() + limits.absoluteMs),
    address: info.address.slice(0, 64),
    user_agent: info.userAgent ? info.userAgent.slice(0, 200) : null,
  })
  // Keep the table small: this user's rows that can no longer be used go at each sign-in.
  await db('auth_sessions')
    .where('user_id', userId)
    .where((w) => w.whereNotNull('ended_at').orWhere('expires_at', '<', now).orWhere('last_seen_at', '<', new Date(now.getTime() - limits.idleMs)))
    .delete()
  return id
}

/** Ends one session (no-op when it has ended already). */
export async function endSession(db: Knex | Knex.Transaction, id: string, reason: SessionEndReason, now = new Date()) {
  return db('auth_sessions').where('id', id).whereNull('ended_at').update({ ended_at: now, end_reason: reason })
}

/** Ends every live session of a user; answers how many were live. */
export async function endUserSessions(db: Knex | Knex.Transaction, userId: number, reason: SessionEndReason, now = new Date()): Promise<number> {
  return db('auth_sessions').where('user_id', userId).whereNull('ended_at').update({ ended_at: now, end_reason: reason })
}

// A request that finds `last_seen_at` stale writes it; others arriving in the same moment on this
// instance do not write it again.
const touched = new Map<string, number>()

export async function touchSession(db: Knex, id: string, lastSeen: Date | string, limits: SessionLimits, now = Date.now()) {
  const every = touchIntervalMs(limits)
  if (now - new Date(lastSeen).getTime() < every) return
  if ((touched.get(id) ?? 0) > now - every) return
  if (touched.size > 10_000) touched.clear()
  touched.set(id, now)
  await db('auth_sessions').where('id', id).whereNull('ended_at').update({ last_seen_at: new Date(now) })
}

/** The session id sealed in this request's cookie, if any. */
export async function sessionIdOf(event: H3Event): Promise<string | undefined> {
  const session = (await getUserSession(event)) as SessionCookie
  return typeof session.sid === 'string' ? session.sid : undefined
}
