import { SESSION_WRITERS } from '#shared/roles'
import { ImportQuerySchema } from '#shared/schemas/import'
import { importLoggerFile } from '../../services/logger-import'

// The body is the raw CSV (or the CSV gzip-compressed, with content-encoding: gzip), streamed;
// the metadata and column mapping come in the query string.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const meta = readValidQuery(event, ImportQuerySchema)
  const upload = { body: event.node.req, declaredBytes: Number(getRequestHeader(event, 'content-length') ?? 0), maxBytes: Number(useRuntimeConfig().loggerMaxBytes), gzipped: getRequestHeader(event, 'content-encoding') === 'gzip' }
  const result = await callService(importLoggerFile, actor, meta, upload)
  setResponseStatus(event, 201)
  return result
})
