import { SESSION_WRITERS } from '#shared/roles'
import { UploadIdParams } from '#shared/schemas/import'

// tus: the next part of the upload, at the offset the server holds (another offset answers 409).
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  readValidParams(event, UploadIdParams)
  await handleUpload(event, actor)
})
