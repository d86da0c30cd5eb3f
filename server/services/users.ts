import type { Knex } from 'knex'
import { roleFitsOrganisation, type Role } from '#shared/roles'
import { canManageUsersOf, mayGrantRole, scopeUsers, type Actor } from '../utils/guard'
import { audit } from '../utils/audit'
import { endUserSessions } from '../utils/auth-session'
import { badRequest, conflict, forbidden, notFound } from '../utils/errors'

export interface UserDto {
  id: number
  email: string
  name: string
  role: Role
  active: boolean
  organisationId: number
  organisationName: string
  organisationKind: 'supplier' | 'team'
}

function toDto(r: any): UserDto {
  return {
    id: r.id,
    email: r.email,
    name: r.name,
    role: r.role,
    active: Boolean(r.active),
    organisationId: r.organisation_id,
    organisationName: r.org_name,
    organisationKind: r.org_kind,
  }
}

function baseQuery(db: Knex | Knex.Transaction) {
  return db('users as u')
    .join('organisations as o', 'o.id', 'u.organisation_id')
    .select('u.id', 'u.email', 'u.name', 'u.role', 'u.active', 'u.organisation_id', 'o.name as org_name', 'o.kind as org_kind')
}

export async function listUsers(db: Knex, actor: Actor): Promise<UserDto[]> {
  const rows = await scopeUsers(baseQuery(db), actor, 'u.organisation_id').orderBy(['o.name', 'u.name'])
  return rows.map(toDto)
}

function assertRoleAllowed(actor: Actor, role: Role, orgKind: 'supplier' | 'team') {
  if (!roleFitsOrganisation(role, orgKind)) badRequest(`Invalid input: role: ${role} does not belong in a ${orgKind} organisation`)
  if (!mayGrantRole(actor, role)) {
    forbidden('A team manager can give team roles only')
  }
}

export async function createUser(
  db: Knex,
  actor: Actor,
  input: { email: string; name: string; role: Role; organisationId: number; password: string },
): Promise<UserDto> {
  // Hashed before the transaction, so no row stays locked while the hash is worked out.
  const passwordHash = await hashPassword(input.password)
  return db.transaction(async (trx) => {
    if (!canManageUsersOf(actor, input.organisationId)) notFound('Organisation')
    const org = await trx('organisations').where('id', input.organisationId).first()
    if (!org) notFound('Organisation')
    assertRoleAllowed(actor, input.role, org.kind)
    const existing = await trx('users').where('email', input.email).first()
    if (existing) conflict(`A user with the e-mail ${input.email} already exists`)
    const [id] = await trx('users').insert({
      email: input.email,
      name: input.name,
      role: input.role,
      organisation_id: input.organisationId,
      password_hash: passwordHash,
    })
    await audit(trx, actor, {
      entity: 'user',
      entityId: id!,
      action: 'create',
      after: { email: input.email, name: input.name, role: input.role, organisationId: input.organisationId },
    })
    return toDto(await baseQuery(trx).where('u.id', id).first())
  })
}

export async function updateUser(
  db: Knex,
  actor: Actor,
  id: number,
  input: { name?: string; role?: Role; active?: boolean; password?: string },
): Promise<UserDto> {
  const passwordHash = input.password ? await hashPassword(input.password) : undefined
  return db.transaction(async (trx) => {
    const before = await scopeUsers(baseQuery(trx), actor, 'u.organisation_id').where('u.id', id).forUpdate().first()
    if (!before) notFound('User')
    if (input.role) assertRoleAllowed(actor, input.role, before.org_kind)
    if (id === actor.id && (input.active === false || (input.role && input.role !== before.role))) {
      conflict('You cannot deactivate yourself or change your own role')
    }
    const patch: Record<string, unknown> = { updated_at: new Date() }
    if (input.name !== undefined) patch.name = input.name
    if (input.role !== undefined) patch.role = input.role
    if (input.active !== undefined) patch.active = input.active
    if (passwordHash) patch.password_hash = passwordHash
    // Deactivation, a new role or a new password ends every existing session of that user, on every
    // instance: the session rows end, and the session version moves on.
    const endsSessions =
      (input.active !== undefined && input.active !== Boolean(before.active)) || (input.role !== undefined && input.role !== before.role) || Boolean(passwordHash)
    await trx('users').where('id', id).update(endsSessions ? { ...patch, session_version: trx.raw('session_version + 1') } : patch)
    if (endsSessions) {
      const reason = input.active !== undefined && input.active !== Boolean(before.active) ? 'deactivated' : input.role !== undefined && input.role !== before.role ? 'role' : 'password'
      await endUserSessions(trx, id, reason)
    }
    await audit(trx, actor, {
      entity: 'user',
      entityId: id,
      action: 'update',
      before: { name: before.name, role: before.role, active: Boolean(before.active) },
      after: {
        name: input.name ?? before.name,
        role: input.role ?? before.role,
        active: input.active ?? Boolean(before.active),
        passwordChanged: Boolean(passwordHash),
      },
    })
    return toDto(await baseQuery(trx).where('u.id', id).first())
  })
}
