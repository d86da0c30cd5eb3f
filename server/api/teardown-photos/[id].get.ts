import { FLEET_READERS } from '#shared/roles'
import { photoFor } from '../../services/teardowns'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const photo = await photoFor(useDb(), actor, id)
  const bytes = await useStorage('files').getItemRaw(photo.key)
  if (!bytes) notFound('Photo')
  setResponseHeaders(event, { 'content-type': photo.contentType, 'x-content-type-options': 'nosniff', 'cache-control': 'private, max-age=3600', 'content-security-policy': "default-src 'none'" })
  return bytes instanceof Uint8Array ? bytes : Buffer.from(bytes as ArrayBuffer)
})
