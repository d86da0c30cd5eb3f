import { OrganisationCreateSchema } from '#shared/schemas/user'
import { createOrganisation } from '../../services/organisations'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin'])
  const input = await readValidBody(event, OrganisationCreateSchema)
  const created = await callService(createOrganisation, actor, input)
  setResponseStatus(event, 201)
  return created
})
