import { FLEET_READERS } from '#shared/roles'
import { TeardownListQuery } from '#shared/schemas/teardown'
import { listTeardowns } from '../../services/teardowns/sheet'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const q = readValidQuery(event, TeardownListQuery)
  return callService(listTeardowns, actor, q)
})
