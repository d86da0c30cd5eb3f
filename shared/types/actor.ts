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

/** One of the signed-in user's own live sessions (GET /api/me/sessions). */
export interface MySessionDto {
  /** The session this request came with. */
  current: boolean
  signedInAt: string
  lastSeenAt: string
  /** When it ends unless used again before (idle timeout), never later than `endsAt`. */
  idleEndsAt: string
  /** Its absolute end. */
  endsAt: string
  address: string | null
  userAgent: string | null
}

export interface MySessionsDto {
  /** A session ends after this long without a request (runtimeConfig sessionIdleTimeout). */
  idleSeconds: number
  /** ... and this long after sign-in at the latest (runtimeConfig session.maxAge). */
  lifetimeSeconds: number
  sessions: MySessionDto[]
}
