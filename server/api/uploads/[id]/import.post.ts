import { SESSION_WRITERS } from '#shared/roles'
import { ImportQuerySchema, UploadIdParams } from '#shared/schemas/import'
import { importFinishedUpload } from '../../../services/logger-import'

// A finished resumable upload becomes a session; metadata and mapping as for /api/imports.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, UploadIdParams)
  const meta = readValidQuery(event, ImportQuerySchema)
  const result = await callService(importFinishedUpload, actor, id, meta, Number(useRuntimeConfig().loggerMaxBytes))
  setResponseStatus(event, 201)
  return result
})
