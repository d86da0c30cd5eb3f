// The signed-in user's own sessions.
import type { Knex } from 'knex'
import type { MySessionsDto } from '#shared/types/actor'
import type { Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { endUserSessions, sessionLimits } from '../utils/auth-session'

/** The user's own live sessions (browsers and devices), newest first; ids are never shown. */
export async function mySessions(db: Knex, actor: Actor, currentSessionId: string | undefined): Promise<MySessionsDto> {
  const limits = sessionLimits()
  const now = Date.now()
  const rows = await db('auth_sessions')
    .where('user_id', actor.id)
    .whereNull('ended_at')
    .where('expires_at', '>', new Date(now))
    .where('last_seen_at', '>', new Date(now - limits.idleMs))
    .orderBy('created_at', 'desc')
    .select('id', 'created_at', 'last_seen_at', 'expires_at', 'address', 'user_agent')
  const sessions = rows.map((r) => ({
    current: r.id === currentSessionId,
    signedInAt: new Date(r.created_at).toISOString(),
    lastSeenAt: new Date(r.last_seen_at).toISOString(),
    idleEndsAt: new Date(Math.min(new Date(r.last_seen_at).getTime() + limits.idleMs, new Date(r.expires_at).getTime())).toISOString(),
    endsAt: new Date(r.expires_at).toISOString(),
    address: r.address,
    userAgent: r.user_agent,
  }))
  return { idleSeconds: limits.idleMs / 1000, lifetimeSeconds: limits.absoluteMs / 1000, sessions }
}

/** Sign out everywhere: ends every session of the user, the current one included, on every instance. */
export async function signOutEverywhere(db: Knex, actor: Actor): Promise<{ ended: number }> {
  const ended = await endUserSessions(db, actor.id, 'everywhere')
  await audit(db, actor, { entity: 'user', entityId: actor.id, action: 'sign-out-everywhere', after: { sessions: ended } })
  return { ended }
}
