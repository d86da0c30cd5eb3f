import { SESSION_WRITERS } from '#shared/roles'
import { UploadIdParams } from '#shared/schemas/import'

// tus: how many bytes of the upload the server holds, to resume from there.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  readValidParams(event, UploadIdParams)
  await handleUpload(event, actor)
})
