import { z } from 'zod'
import { line } from '#shared/text'
import { auditTrail } from '../../services/audit-trail'

const AuditQuery = z.object({
  entity: line().trim().max(60).optional(),
  action: line().trim().max(60).optional(),
  userId: z.coerce.number().int().positive().optional(),
  from: z.iso.date().optional(),
  to: z.iso.date().optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
})

// Read-only: the app has no route that edits or deletes audit rows.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer'])
  const q = readValidQuery(event, AuditQuery)
  return callService(auditTrail, actor, q)
})
