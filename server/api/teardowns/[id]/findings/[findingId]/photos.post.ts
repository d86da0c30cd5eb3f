import { z } from 'zod'
import { PHOTO_MAX_BYTES, TEARDOWN_WORKERS } from '#shared/schemas/teardown'
import { sniffImage } from '../../../../../services/image-sniff'
import { addPhoto } from '../../../../../services/teardowns'

const Params = z.object({ id: z.coerce.number().int().positive(), findingId: z.coerce.number().int().positive() })

// A photo for a finding: multipart field "file"; PNG, JPEG or WebP recognised by content, at most 8 MB.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, TEARDOWN_WORKERS)
  const { id, findingId } = readValidParams(event, Params)
  const upload = await readFileUpload(event, { field: 'file', maxBytes: PHOTO_MAX_BYTES })
  const image = sniffImage(upload.bytes)
  if (!image) badRequest(`Invalid input: file: ${upload.name ?? 'the file'} is not a PNG, JPEG or WebP image (its content was checked, not its name)`)
  const storage = useStorage('files')
  const result = await addPhoto(useDb(), { setItemRaw: (k, v) => storage.setItemRaw(k, v), removeItem: (k) => storage.removeItem(k) }, actor, id, findingId, { bytes: upload.bytes, type: image.type, width: image.width, height: image.height, name: upload.name })
  setResponseStatus(event, 201)
  return result
})
