// Logger sessions stored before every channel's overview was kept get it from their kept raw
// files, in the background after start (Nitro plugins are not awaited; the server answers meanwhile).
import { fillMissingTraceOverviews } from '../services/trace-overview'

export default defineNitroPlugin(() => {
  const maxBytes = Number(useRuntimeConfig().loggerMaxBytes)
  setTimeout(() => {
    fillMissingTraceOverviews(useDb(), maxBytes, (m) => console.warn(`[crankledger] ${m}`))
      .then(({ done, failed }) => {
        if (done || failed) console.log(`[crankledger] session charts: ${done} session(s) read again from their files, ${failed} could not be`)
      })
      .catch((e) => console.error('[crankledger] session charts: could not read stored files again:', e?.message ?? e))
  }, 1500)
})
