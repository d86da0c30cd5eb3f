// Stored files go through Nitro storage (mount 'files': a local directory by default; an
// object-store driver can be mounted in its place). Keys are generated, never client names.
import { randomUUID } from 'node:crypto'
import { createReadStream, createWriteStream } from 'node:fs'
import { mkdir } from 'node:fs/promises'
import { dirname, join } from 'node:path'
import { Readable, type Writable } from 'node:stream'

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

/** The file's path when the mount is the local-disk driver (keys map to folders), else null. */
function localPath(key: string): string | null {
  const { driver } = useStorage().getMount(`files:${key}`)
  const base = (driver.options as { base?: string } | undefined)?.base
  if (driver.name !== 'fs' || !base || /\.\.(:|$)/.test(key)) return null
  return join(base, key.replace(/:/g, '/'))
}

/**
 * A sink that writes a file as it is streamed: straight to disk with the local driver, so a
 * file of any size never sits in memory. Another driver (an object store) is handed the whole
 * file at the end, as unstorage takes it. `done` settles once the file is stored.
 */
export async function fileSink(key: string): Promise<{ stream: Writable; done: Promise<void> }> {
  const path = localPath(key)
  if (path) {
    await mkdir(dirname(path), { recursive: true })
    const stream = createWriteStream(path)
    const done = new Promise<void>((resolve, reject) => {
      stream.on('error', reject)
      stream.on('close', resolve) // after 'finish', or after destroy() on a failed import
    })
    return { stream, done }
  }
  const { PassThrough } = await import('node:stream')
  const stream = new PassThrough()
  const parts: Buffer[] = []
  stream.on('data', (c: Buffer) => parts.push(c))
  const done = new Promise<void>((resolve, reject) => {
    stream.on('end', () => putFile(key, Buffer.concat(parts)).then(resolve, reject))
    stream.on('error', reject)
    stream.on('close', () => {
      if (!stream.readableEnded) resolve()
    })
  })
  return { stream, done }
}

/** A stored file as a stream (null when missing): read from disk a piece at a time with the local driver. */
export async function fileSource(key: string): Promise<Readable | null> {
  const path = localPath(key)
  if (path) {
    if (!(await fileStorage().hasItem(key))) return null
    return createReadStream(path, { highWaterMark: 1 << 20 })
  }
  const buf = await getFile(key)
  return buf ? Readable.from([buf]) : null
}
