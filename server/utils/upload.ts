import type { H3Event } from 'h3'

/** Past this we stop draining and drop the connection: nobody sends a photo this large by mistake. */
const HARD_CAP_BYTES = 64 * 1024 * 1024

function tooLarge(field: string, maxBytes: number): never {
  throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: `Invalid input: ${field}: the file is larger than ${Math.round(maxBytes / 1024 / 1024)} MB` })
}

/**
 * Reads one file field of a multipart upload, counting bytes while reading: nothing beyond
 * maxBytes (plus room for the multipart framing) is ever kept in memory. An oversized body is
 * drained without being stored so the client still receives the 413 answer.
 */
export async function readFileUpload(event: H3Event, opts: { field: string; maxBytes: number }): Promise<{ bytes: Uint8Array; name: string | null; declaredType: string | null }> {
  const { field, maxBytes } = opts
  const contentType = getRequestHeader(event, 'content-type') ?? ''
  if (!contentType.toLowerCase().startsWith('multipart/form-data')) badRequest(`Invalid input: ${field}: send the file as multipart/form-data in a field named "${field}"`)
  const limit = maxBytes + 64 * 1024
  const declared = Number(getRequestHeader(event, 'content-length') ?? NaN)
  const req = event.node.req
  const chunks: Buffer[] = []
  let total = 0
  let over = declared > limit
  for await (const chunk of req) {
    total += chunk.length
    if (total > limit) over = true
    if (over) {
      chunks.length = 0
      if (total > HARD_CAP_BYTES) {
        req.destroy()
        break
      }
      continue
    }
    chunks.push(chunk as Buffer)
  }
  if (over) tooLarge(field, maxBytes)
  let form: FormData
  try {
    form = await new Response(Buffer.concat(chunks), { headers: { 'content-type': contentType } }).formData()
  } catch {
    badRequest(`Invalid input: ${field}: the upload is not readable multipart/form-data`)
  }
  const file = form.get(field)
  if (!file || typeof file === 'string') badRequest(`Invalid input: ${field}: no file was sent in the "${field}" field`)
  const bytes = new Uint8Array(await file.arrayBuffer())
  if (bytes.length === 0) badRequest(`Invalid input: ${field}: the file is empty`)
  if (bytes.length > maxBytes) tooLarge(field, maxBytes)
  return { bytes, name: (file as File).name || null, declaredType: file.type || null }
}
