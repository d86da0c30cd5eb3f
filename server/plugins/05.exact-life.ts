// Sessions stored before exact equivalent hours were kept get them from their kept raw files,
// in the background after start (Nitro plugins are not awaited; the server answers meanwhile).
import { reprocessSessionsWithoutMoments } from '../services/logger-import'

export default defineNitroPlugin(() => {
  const maxBytes = Number(useRuntimeConfig().loggerMaxBytes)
  setTimeout(() => {
    reprocessSessionsWithoutMoments(useDb(), maxBytes, (m) => console.warn(`[crankledger] ${m}`))
      .then(({ done, failed }) => {
        if (done || failed) console.log(`[crankledger] exact equivalent hours: ${done} session(s) read again from their files, ${failed} could not be`)
      })
      .catch((e) => console.error('[crankledger] exact equivalent hours: could not read stored files again:', e?.message ?? e))
  }, 1000)
})
