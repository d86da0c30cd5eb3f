import { fleetFindings } from '../../services/teardowns/findings'

// Findings across the fleet per component type: the evidence for adjusting a limit.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, ['admin', 'supplier_engineer', 'mechanic'])
  return callService(fleetFindings, actor)
})
