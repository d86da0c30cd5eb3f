import { SESSION_WRITERS } from '#shared/roles'
import { ImportQuerySchema } from '#shared/schemas/import'
import { importLoggerFile } from '../../services/logger-import'

// The body is the raw CSV, streamed; the metadata and column mapping come in the query string.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const meta = readValidQuery(event, ImportQuerySchema)
  const maxBytes = Number(useRuntimeConfig().loggerMaxBytes)
  const length = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (length > maxBytes) {
    throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: `The file is ${(length / 1048576).toFixed(0)} MiB; the limit is ${(maxBytes / 1048576).toFixed(0)} MiB` })
  }
  const result = await importLoggerFile(useDb(), actor, meta, event.node.req, maxBytes)
  triggerLifeCheck()
  setResponseStatus(event, 201)
  return result
})
