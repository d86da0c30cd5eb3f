// Stored files go through Nitro storage (mount 'files': a local directory by default; an
// object-store driver can be mounted in its place). Keys are generated, never client names.
import { randomUUID } from 'node:crypto'

export function newFileKey(kind: string, ext: string) {
  const d = new Date()
  return `${kind}:${d.getUTCFullYear()}:${String(d.getUTCMonth() + 1).padStart(2, '0')}:${randomUUID()}.${ext}`
}

export function fileStorage() {
  return useStorage('files')
}

export async function putFile(key: string, data: Buffer) {
  await storeCall(() => fileStorage().setItemRaw(key, data))
}

export async function getFile(key: string): Promise<Buffer | null> {
  const v = await storeCall(() => fileStorage().getItemRaw(key))
  if (v === null || v === undefined) return null
  return Buffer.isBuffer(v) ? v : Buffer.from(v as ArrayBuffer)
}

export async function removeFile(key: string) {
  await storeCall(() => fileStorage().removeItem(key))
}

const STORE_DOWN_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'EHOSTUNREACH', 'UND_ERR_SOCKET', 'UND_ERR_CONNECT_TIMEOUT'])

/** True when an error means the file store (an S3-compatible service) cannot be reached or is failing. */
export function isStoreUnavailable(error: unknown): boolean {
  for (let e: any = error, depth = 0; e && depth < 4; e = e.cause, depth++) {
    if (STORE_DOWN_CODES.has(e.code) || e.message === 'fetch failed' || /^\[unstorage\] \[s3\] .*: 5\d\d /.test(String(e.message))) return true
  }
  return false
}

// The store's own error never reaches the client: away or failing, the answer is a 503 saying so.
async function storeCall<T>(call: () => Promise<T>): Promise<T> {
  try {
    return await call()
  } catch (error) {
    if (isStoreUnavailable(error)) {
      throw createError({ statusCode: 503, statusMessage: 'Service Unavailable', message: 'The file store cannot be reached at the moment. Nothing was stored; try again in a few seconds.' })
    }
    throw error
  }
}
