import { z } from 'zod'
import { BILLING_WRITERS } from '#shared/schemas/billing'
import { listContracts } from '../../../services/billing/contracts'

const Query = z.object({ teamId: z.coerce.number().int().positive().optional() })

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, BILLING_WRITERS)
  const { teamId } = readValidQuery(event, Query)
  return callService(listContracts, actor, teamId)
})
