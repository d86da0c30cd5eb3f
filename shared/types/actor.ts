import type { OrganisationKind, Role } from '../roles'

/** The signed-in person as the server's guard resolves it and as the app shows it. */
export interface Actor {
  id: number
  name: string
  email: string
  role: Role
  organisationId: number
  organisationName: string
  organisationKind: OrganisationKind
  /** The supplier this actor works for or leases from. */
  supplierId: number
}
