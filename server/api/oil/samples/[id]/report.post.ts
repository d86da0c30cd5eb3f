import { SESSION_WRITERS } from '#shared/roles'
import { attachOilReport, PDF_MAX_BYTES } from '../../../../services/oil'

export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, SESSION_WRITERS)
  const { id } = readValidParams(event, IdParams)
  // Refuse an oversized upload before reading it into memory.
  const length = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (length > PDF_MAX_BYTES + 64 * 1024) badRequest(`file: the report must be at most ${PDF_MAX_BYTES / 1024 / 1024} MB`)
  let parts: Awaited<ReturnType<typeof readMultipartFormData>>
  try {
    parts = await readMultipartFormData(event)
  } catch {
    badRequest('file: send the report as multipart/form-data')
  }
  const file = parts?.find((p) => p.name === 'file' && p.filename !== undefined)
  if (!file) badRequest('file: attach the report as the form field "file"')
  return attachOilReport(useDb(), actor, id, { data: file.data, filename: file.filename, type: file.type })
})
