import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import type { Role } from '#shared/roles'
import type { Actor } from '#shared/types/actor'
import { endSession, sessionEndedBy, sessionLimits, touchSession, type SessionCookie } from './auth-session'

export type { Actor }

/**
 * The one guard every API route goes through: a live server-side session (`auth_sessions`, see
 * auth-session.ts) of an active user whose session version still matches, holding one of `roles`.
 * One indexed read per request: the session row by primary key, joined with its user and
 * organisation. Organisation scoping is applied with `scopeQuery` / `canSee`, so records of another
 * organisation answer 404.
 */
export async function requireActor(event: H3Event, roles: readonly Role[]): Promise<Actor> {
  let actor = event.context.actor as Actor | undefined
  if (!actor) {
    const cookie = await sessionCookieOf(event)
    if (!cookie?.user?.id) throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Sign in first' })
    const db = useDb()
    const row = cookie.sid
      ? await db('auth_sessions as s')
          .join('users as u', 'u.id', 's.user_id')
          .join('organisations as o', 'o.id', 'u.organisation_id')
          .where('s.id', cookie.sid)
          .first('s.user_id', 's.last_seen_at', 's.expires_at', 's.ended_at', 'u.id', 'u.name', 'u.email', 'u.role', 'u.active', 'u.session_version', 'o.id as org_id', 'o.name as org_name', 'o.kind as org_kind', 'o.supplier_id')
      : undefined
    const limits = sessionLimits()
    const ended = row ? sessionEndedBy(row, limits) : 'ended'
    if (!row || ended || row.user_id !== cookie.user.id || !row.active || row.session_version !== cookie.user.sessionVersion) {
      // The row keeps why it ended (clearing the cookie below would otherwise end it as a sign-out).
      const reason = ended === 'idle' || ended === 'expired' ? ended : row && !ended && !row.active ? 'deactivated' : null
      if (reason) await endSession(db, cookie.sid!, reason)
      await clearUserSession(event)
      throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Your session has ended: sign in again' })
    }
    await touchSession(db, cookie.sid!, row.last_seen_at, limits)
    actor = {
      id: row.id,
      name: row.name,
      email: row.email,
      role: row.role,
      organisationId: row.org_id,
      organisationName: row.org_name,
      organisationKind: row.org_kind,
      supplierId: row.org_kind === 'supplier' ? row.org_id : row.supplier_id,
    }
    event.context.actor = actor
    event.context.sessionId = cookie.sid
  }
  if (!roles.includes(actor.role)) forbidden()
  return actor
}

// Unsealing the cookie is the costliest step of a request; a sealed value never changes, so its
// content is remembered briefly. The session row is still read every time (ending it ends access at once).
const UNSEAL_TTL_MS = 60_000
const unsealed = new Map<string, { cookie: SessionCookie; until: number }>()

async function sessionCookieOf(event: H3Event): Promise<SessionCookie | undefined> {
  const raw = getCookie(event, 'nuxt-session')
  const now = Date.now()
  const hit = raw ? unsealed.get(raw) : undefined
  if (hit && hit.until > now) return hit.cookie
  const session = (await getUserSession(event)) as SessionCookie
  const cookie: SessionCookie = { user: session.user, sid: typeof session.sid === 'string' ? session.sid : undefined }
  if (raw && cookie.user?.id) {
    if (unsealed.size > 5000) unsealed.clear()
    unsealed.set(raw, { cookie, until: now + UNSEAL_TTL_MS })
  }
  return cookie
}

/** Columns that say who owns a record: the supplier that owns it and the team that runs it. */
export interface OwnerColumns {
  supplier: string
  team: string
}

/** Restrict a query to what the actor may see: admins everything, the supplier its own, a team its own. */
export function scopeQuery<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, cols: OwnerColumns): Q {
  if (actor.role === 'admin') return qb
  if (actor.organisationKind === 'supplier') return qb.where(cols.supplier, actor.organisationId) as Q
  return qb.where(cols.team, actor.organisationId) as Q
}

export function canSee(actor: Actor, owner: { supplierId: number | null; teamId: number | null }): boolean {
  if (actor.role === 'admin') return true
  if (actor.organisationKind === 'supplier') return owner.supplierId === actor.organisationId
  return owner.teamId === actor.organisationId
}
