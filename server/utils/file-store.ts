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
  await fileStorage().setItemRaw(key, data)
}

export async function getFile(key: string): Promise<Buffer | null> {
  const v = await fileStorage().getItemRaw(key)
  if (v === null || v === undefined) return null
  return Buffer.isBuffer(v) ? v : Buffer.from(v as ArrayBuffer)
}

export async function removeFile(key: string) {
  await fileStorage().removeItem(key)
}
