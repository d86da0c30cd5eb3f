// Public readiness probe (load balancers, start script): answers 503 while the database is away.
export default defineEventHandler(async (event) => {
  try {
    await useDb().raw('SELECT 1')
    return { ok: true }
  } catch {
    setResponseStatus(event, 503)
    return { ok: false, message: 'Database unavailable' }
  }
})
