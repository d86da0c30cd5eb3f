import { SESSION_WRITERS } from '#shared/roles'
import { UploadIdParams } from '#shared/schemas/import'

// tus: abandons the upload and removes its parts.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  readValidParams(event, UploadIdParams)
  await handleUpload(event, actor)
})
