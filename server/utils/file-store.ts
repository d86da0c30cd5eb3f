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
