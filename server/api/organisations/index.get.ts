import { ANY_ROLE } from '#shared/roles'
import { listOrganisations } from '../../services/organisations'

// Admins see every organisation; the supplier sees itself and its teams; a team sees itself.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  return callService(listOrganisations, actor)
})
