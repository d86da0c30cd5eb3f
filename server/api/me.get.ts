import { ANY_ROLE } from '#shared/roles'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ANY_ROLE)
  return actor
})
