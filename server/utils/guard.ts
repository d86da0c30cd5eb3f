import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import type { Role } from '#shared/roles'
import type { Actor } from '#shared/types/actor'

export type { Actor }

/**
 * The one guard every API route goes through: a live session of an active user whose
 * session version still matches, holding one of `roles`. Organisation scoping is applied
 * with `scopeQuery` / `canSee`, so records of another organisation answer 404.
 */
export async function requireActor(event: H3Event, roles: readonly Role[]): Promise<Actor> {
  let actor = event.context.actor as Actor | undefined
  if (!actor) {
    const sessionUser = await sessionUserOf(event)
    if (!sessionUser?.id) throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Sign in first' })
    const row = await useDb()('users as u')
      .join('organisations as o', 'o.id', 'u.organisation_id')
      .where('u.id', sessionUser.id)
      .first('u.id', 'u.name', 'u.email', 'u.role', 'u.active', 'u.session_version', 'o.id as org_id', 'o.name as org_name', 'o.kind as org_kind', 'o.supplier_id')
    if (!row || !row.active || row.session_version !== sessionUser.sessionVersion) {
      await clearUserSession(event)
      throw createError({ statusCode: 401, statusMessage: 'Unauthorized', message: 'Your session has ended: sign in again' })
    }
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
  }
  if (!roles.includes(actor.role)) forbidden()
  return actor
}

// Unsealing the cookie is the costliest step of a request; a sealed value never changes, so its
// content is remembered briefly. The user row is still read every time (deactivation ends access at once).
const UNSEAL_TTL_MS = 60_000
const unsealed = new Map<string, { user: { id?: number; sessionVersion?: number } | undefined; until: number }>()

async function sessionUserOf(event: H3Event) {
  const raw = getCookie(event, 'nuxt-session')
  const now = Date.now()
  const hit = raw ? unsealed.get(raw) : undefined
  if (hit && hit.until > now) return hit.user
  const session = await getUserSession(event)
  const user = session.user as { id?: number; sessionVersion?: number } | undefined
  if (raw && user?.id) {
    if (unsealed.size > 5000) unsealed.clear()
    unsealed.set(raw, { user, until: now + UNSEAL_TTL_MS })
  }
  return user
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
