import { z } from 'zod'
import { PHOTO_MAX_BYTES, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { addPhotoUpload } from '../../../../../services/teardowns/findings'

const FindingParams = z.object({ id: z.coerce.number().int().positive(), findingId: z.coerce.number().int().positive() })

// A photo for a finding: multipart field "file"; PNG, JPEG or WebP recognised by content, at most 8 MB.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id, findingId } = readValidParams(event, FindingParams)
  const upload = await readFileUpload(event, { field: 'file', maxBytes: PHOTO_MAX_BYTES })
  const result = await callService(addPhotoUpload, actor, id, findingId, upload)
  setResponseStatus(event, 201)
  return result
})
