import { ANY_ROLE } from '#shared/roles'
import type { MySessionsDto } from '#shared/types/actor'

// The signed-in user's own live sessions (browsers and devices), newest first; ids are never shown.
export default defineEventHandler(async (event): Promise<MySessionsDto> => {
  const actor = await requireActor(event, ANY_ROLE)
  const limits = sessionLimits()
  const now = Date.now()
  const rows = await useDb()('auth_sessions')
    .where('user_id', actor.id)
    .whereNull('ended_at')
    .where('expires_at', '>', new Date(now))
    .where('last_seen_at', '>', new Date(now - limits.idleMs))
    .orderBy('created_at', 'desc')
    .select('id', 'created_at', 'last_seen_at', 'expires_at', 'address', 'user_agent')
  const sessions = rows.map((r) => ({
    current: r.id === event.context.sessionId,
    signedInAt: new Date(r.created_at).toISOString(),
    lastSeenAt: new Date(r.last_seen_at).toISOString(),
    idleEndsAt: new Date(Math.min(new Date(r.last_seen_at).getTime() + limits.idleMs, new Date(r.expires_at).getTime())).toISOString(),
    endsAt: new Date(r.expires_at).toISOString(),
    address: r.address,
    userAgent: r.user_agent,
  }))
  return { idleSeconds: limits.idleMs / 1000, lifetimeSeconds: limits.absoluteMs / 1000, sessions }
})
