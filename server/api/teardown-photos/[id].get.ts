import { FLEET_READERS } from '#shared/roles'
import { photoFile } from '../../services/teardowns/findings'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const photo = await callService(photoFile, actor, id)
  setResponseHeaders(event, { 'content-type': photo.contentType, 'x-content-type-options': 'nosniff', 'cache-control': 'private, max-age=3600', 'content-security-policy': "default-src 'none'" })
  return photo.bytes
})
