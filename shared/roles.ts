export const ROLES = ['admin', 'supplier_engineer', 'team_manager', 'race_engineer', 'mechanic'] as const
export type Role = (typeof ROLES)[number]
export type OrganisationKind = 'supplier' | 'team'

export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Admin',
  supplier_engineer: 'Supplier engineer',
  team_manager: 'Team manager',
  race_engineer: 'Race engineer',
  mechanic: 'Mechanic',
}

/** Which roles an organisation of each kind can hold (a mechanic works for a team or for the supplier's workshop). */
export const ROLES_BY_KIND: Record<OrganisationKind, readonly Role[]> = {
  supplier: ['admin', 'supplier_engineer', 'mechanic'],
  team: ['team_manager', 'race_engineer', 'mechanic'],
}

export const SUPPLIER_ROLES = ['admin', 'supplier_engineer'] as const satisfies readonly Role[]
export const ANY_ROLE = ROLES
export const FLEET_READERS = ROLES
export const SESSION_WRITERS = ['admin', 'supplier_engineer', 'team_manager', 'race_engineer'] as const satisfies readonly Role[]
/** Void or restore a session: the team's race engineer (its own team's sessions), the supplier's engineer, an admin. */
export const SESSION_VOIDERS = ['admin', 'supplier_engineer', 'race_engineer'] as const satisfies readonly Role[]
export const ALLOCATION_READERS = ['admin', 'supplier_engineer', 'team_manager', 'race_engineer'] as const satisfies readonly Role[]
export const ALLOCATION_PLANNERS = ['admin', 'supplier_engineer', 'team_manager'] as const satisfies readonly Role[]
export const USER_MANAGERS = ['admin', 'team_manager'] as const satisfies readonly Role[]
/** Who keeps contracts and statements: the supplier side. */
export const BILLING_WRITERS = ['admin', 'supplier_engineer'] as const satisfies readonly Role[]
/** Who reads statements: the supplier side and a team's manager (their own team's only). */
export const STATEMENT_READERS = ['admin', 'supplier_engineer', 'team_manager'] as const satisfies readonly Role[]

export function roleFitsOrganisation(role: Role, kind: OrganisationKind): boolean {
  return ROLES_BY_KIND[kind].includes(role)
}
