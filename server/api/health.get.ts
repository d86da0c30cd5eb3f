import { databaseReady } from '../services/health'

// Public readiness probe (load balancers, start script): answers 503 while the database is away.
export default defineEventHandler(async (event) => {
  if (await callService(databaseReady)) return { ok: true }
  setResponseStatus(event, 503)
  return { ok: false, message: 'Database unavailable' }
})
