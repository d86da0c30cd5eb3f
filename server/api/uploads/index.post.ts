import { SESSION_WRITERS } from '#shared/roles'

// tus: starts a resumable upload (server/utils/uploads.ts); the answer's Location names it.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  await handleUpload(event, actor)
})
