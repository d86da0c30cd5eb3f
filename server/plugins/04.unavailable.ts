import { RETRY_AFTER_SECONDS } from '../utils/db'

// Every 503 (database or file store away, a writer switch in progress) tells the client when to
// come back. Error hooks run before the error answer is written, so the header goes out with it.
export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('error', (error, { event }) => {
    const status = (error as { statusCode?: number }).statusCode
    if (event && status === 503 && !event.node.res.headersSent) setResponseHeader(event, 'Retry-After', RETRY_AFTER_SECONDS)
  })
})
