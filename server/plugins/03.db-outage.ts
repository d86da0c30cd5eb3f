// A request that meets an unreachable database answers 503 with a clear message, whatever route it
// was; the pool reconnects by itself once MariaDB is back.
export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('error', (error, { event }) => {
    if (event && isDbUnavailable(error)) event.context.dbUnavailable = true
  })
  nitroApp.hooks.hook('beforeResponse', (event, response) => {
    if (!event.context.dbUnavailable) return
    setResponseStatus(event, 503, 'Service Unavailable')
    response.body = { error: true, statusCode: 503, statusMessage: 'Service Unavailable', message: 'The database cannot be reached at the moment. Nothing was changed; try again in a minute.' }
  })
})
