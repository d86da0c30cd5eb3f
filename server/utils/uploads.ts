// Resumable uploads of logger files (the tus protocol: @tus/server with its file store). Parts
// are written beside the stored files (runtimeConfig.storageDir/uploads: the same disk or
// shared volume), so an upload can go on through another instance. An upload belongs to the
// user who started it: anyone else is answered 404, as for a record they cannot see. An upload
// left unfinished expires (runtimeConfig.uploadExpiryHours) and a scheduled job removes it.
import { createReadStream } from 'node:fs'
import { join, resolve } from 'node:path'
import type { Readable } from 'node:stream'
import { FileStore } from '@tus/file-store'
import { Server } from '@tus/server'
import type { H3Event } from 'h3'
import type { Actor } from './guard'

/** Who asks, per Node request, for the tus hooks (which see the request the tus server made of it). */
const askedBy = new WeakMap<object, string>()
function actorOf(req: Request): string | undefined {
  const nodeReq = (req as { runtime?: { node?: { req?: object } } }).runtime?.node?.req
  return nodeReq ? askedBy.get(nodeReq) : undefined
}
export const UPLOADS_PATH = '/api/uploads'

let server: Server | null = null
let store: FileStore | null = null

function uploadsDir(): string {
  return join(resolve(process.cwd(), useRuntimeConfig().storageDir), 'uploads')
}

function expiryMs(): number {
  return Number(useRuntimeConfig().uploadExpiryHours) * 3600_000
}

const notYours = { status_code: 404, body: 'Upload not found' }

function tus(): Server {
  if (server) return server
  store = new FileStore({ directory: uploadsDir(), expirationPeriodInMilliseconds: expiryMs() })
  const s = new Server({
    path: UPLOADS_PATH,
    datastore: store,
    relativeLocation: true,
    // same origin only: the app's own pages send the parts
    allowedOrigins: [],
    maxSize: Number(useRuntimeConfig().loggerMaxBytes),
    async onUploadCreate(req, upload) {
      // the owner comes from the signed-in session, never from the client's metadata
      const owner = actorOf(req)
      if (!owner) throw { status_code: 403, body: 'Forbidden' }
      return { metadata: { ...upload.metadata, owner } }
    },
    async onIncomingRequest(req, uploadId) {
      if (req.method === 'POST') return
      let owner: string | null | undefined
      try {
        owner = (await store!.getUpload(uploadId)).metadata?.owner
      } catch {
        return // tus answers a missing upload itself (404, or 410 once expired)
      }
      if (!owner || owner !== actorOf(req)) throw notYours
    },
  })
  server = s
  return s
}

/** Hands a tus request (create, offset, part, end) to the tus server, as the signed-in actor. */
export async function handleUpload(event: H3Event, actor: Actor): Promise<void> {
  askedBy.set(event.node.req, String(actor.id))
  await tus().handle(event.node.req, event.node.res)
  event._handled = true
}

export interface FinishedUpload {
  size: number
  /** the client sent the file gzip-compressed */
  gzipped: boolean
  fileName: string | null
  open: () => Readable
}

/**
 * A finished upload of this actor, to be read; null when there is none for them (another
 * user's, a missing or removed one). Throws 409 when parts are still missing.
 */
export async function finishedUpload(id: string, actor: Actor): Promise<FinishedUpload | null> {
  tus()
  let upload
  try {
    upload = await store!.getUpload(id)
  } catch {
    return null
  }
  if (upload.metadata?.owner !== String(actor.id)) return null
  if (upload.size === undefined || upload.offset !== upload.size) {
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message: `The upload is not complete: ${upload.offset} of ${upload.size ?? 'an unknown number of'} bytes received; resume it first` })
  }
  const path = join(uploadsDir(), id)
  return {
    size: upload.size,
    gzipped: upload.metadata?.encoding === 'gzip',
    fileName: upload.metadata?.filename ?? null,
    open: () => createReadStream(path, { highWaterMark: 1 << 20 }),
  }
}

export async function removeUpload(id: string): Promise<void> {
  tus()
  await store!.remove(id).catch(() => {})
}

/**
 * Removes unfinished uploads past their expiry, and finished ones never imported after twice
 * that; answers how many went.
 */
export async function cleanUpUploads(now = Date.now()): Promise<number> {
  const s = tus()
  let removed = await s.cleanUpExpiredUploads()
  const ids: string[] = (await store!.configstore.list?.()) ?? []
  for (const id of ids) {
    const info = await store!.configstore.get(id).catch(() => undefined)
    if (!info?.creation_date || info.offset !== info.size) continue
    if (now - Date.parse(info.creation_date) > 2 * expiryMs()) {
      await store!.remove(id).catch(() => {})
      removed++
    }
  }
  return removed
}
