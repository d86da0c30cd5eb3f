import { runAlertsNow } from '../../services/alerts'

// Run now: an admin's explicit request runs even where the schedule is switched off.
export default defineEventHandler(async (event) => {
  await requireActor(event, ['admin'])
  return runAlertsNow()
})
