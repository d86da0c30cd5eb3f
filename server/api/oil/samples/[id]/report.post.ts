import { SESSION_WRITERS } from '#shared/roles'
import { attachOilReport, PDF_MAX_BYTES } from '../../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, IdParams)
  // The size cap is enforced while the upload is read, not after.
  const file = await readFileUpload(event, { field: 'file', maxBytes: PDF_MAX_BYTES })
  return callService(attachOilReport, actor, id, { data: Buffer.from(file.bytes), filename: file.name ?? undefined, type: file.declaredType ?? undefined })
})
