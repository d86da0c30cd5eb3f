import type { H3Event } from 'h3'
import type { Knex } from 'knex'
import { ROLES_BY_KIND, type Role } from '#shared/roles'
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

// ---------------------------------------------------------------------------------------------
// Scoping: who may read and write what. The one place that looks at an actor's role and
// organisation; services ask here and never compare roles or organisations themselves.
// The table in DEVELOPERS.md states the same rule per resource.

/** Columns that say who owns a fleet record: the supplier that owns the engine and the team that runs it. */
export interface OwnerColumns {
  supplier: string
  team: string
}

const isAdmin = (actor: Actor) => actor.role === 'admin'
const isSupplier = (actor: Actor) => actor.organisationKind === 'supplier'

/** Fleet records (engines, parts, sessions, teardowns, oil samples, alerts, plans): admins all, the supplier its own, a team its own. Read and write alike. */
export function scopeQuery<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, cols: OwnerColumns): Q {
  if (isAdmin(actor)) return qb
  if (isSupplier(actor)) return qb.where(cols.supplier, actor.organisationId) as Q
  return qb.where(cols.team, actor.organisationId) as Q
}

/** The same rule as `scopeQuery` for a record already read. */
export function canSee(actor: Actor, owner: { supplierId: number | null; teamId: number | null }): boolean {
  if (isAdmin(actor)) return true
  if (isSupplier(actor)) return owner.supplierId === actor.organisationId
  return owner.teamId === actor.organisationId
}

/** A part: admins; the supplier that owns it; a team while the part sits in one of its engines. */
export function canSeePart(actor: Actor, part: { supplierId: number | null; currentTeamId: number | null }): boolean {
  return canSee(actor, { supplierId: part.supplierId, teamId: part.currentTeamId })
}

/** A key naming everything the actor may see, for answers cached per scope. */
export function scopeKey(actor: Actor): string {
  return isAdmin(actor) ? 'all' : `${actor.organisationKind}:${actor.organisationId}`
}

/** Supplier catalogue (engine types, component types, events, oil limits) read: admins all; the supplier and its teams the supplier's. */
export function scopeCatalogue<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, supplierColumn = 'supplier_id'): Q {
  return isAdmin(actor) ? qb : (qb.where(supplierColumn, actor.supplierId) as Q)
}
export function canReadCatalogue(actor: Actor, supplierId: number | null): boolean {
  return isAdmin(actor) || supplierId === actor.supplierId
}
/** Supplier catalogue write: admins, and the supplier itself (never a team, whatever its role list). */
export function canWriteCatalogue(actor: Actor, supplierId: number | null): boolean {
  return isAdmin(actor) || supplierId === actor.organisationId
}
/** The supplier a new catalogue record belongs to. */
export function catalogueOwner(actor: Actor): number | null {
  return actor.supplierId
}

/** The team a planning screen opens on: a team member's own; a supplier or an admin chooses one (null). */
export function ownTeam(actor: Actor): number | null {
  return isAdmin(actor) || isSupplier(actor) ? null : actor.organisationId
}

/** Organisations: admins all; the supplier itself and its teams; a team itself. */
export function scopeOrganisations<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, cols = { id: 'id', supplier: 'supplier_id' }): Q {
  if (isAdmin(actor)) return qb
  if (isSupplier(actor)) return qb.where((w) => w.where(cols.id, actor.organisationId).orWhere(cols.supplier, actor.organisationId)) as Q
  return qb.where(cols.id, actor.organisationId) as Q
}

/** The audit trail: admins all; everyone else the entries of their supplier and its teams. */
export function scopeAuditTrail<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, cols: { id: string; supplier: string }): Q {
  if (isAdmin(actor)) return qb
  return qb.where((w) => w.where(cols.id, actor.supplierId).orWhere(cols.supplier, actor.supplierId)) as Q
}

/** Users: admins all; a user manager the users of its own organisation. */
export function scopeUsers<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, organisationColumn: string): Q {
  return isAdmin(actor) ? qb : (qb.where(organisationColumn, actor.organisationId) as Q)
}
export function canManageUsersOf(actor: Actor, organisationId: number): boolean {
  return isAdmin(actor) || organisationId === actor.organisationId
}
/** Only an admin hands out supplier-side roles; a team manager gives the roles of a team. */
export function mayGrantRole(actor: Actor, role: Role): boolean {
  return isAdmin(actor) || ROLES_BY_KIND.team.includes(role)
}

/** Records kept per organisation for its own work (logger profiles, lab mappings): the actor's own organisation, admins included. */
export function scopeOwnOrganisation<Q extends Knex.QueryBuilder>(qb: Q, actor: Actor, organisationColumn: string): Q {
  return qb.where(organisationColumn, actor.organisationId) as Q
}
export function ownOrganisation(actor: Actor): number {
  return actor.organisationId
}
