import type { LoggerMapping } from '#shared/domain/logger-mapping'
import type { EngineSummaryDto, EventDto } from '#shared/types/fleet'

export interface LoggerProfile { id: number; name: string; headerSignature: string; mapping: LoggerMapping }

export interface LoggerUploadHandlers {
  /** share of the file sent, 0 to 1, and the bytes sent of the bytes to send */
  onProgress: (fraction: number | null, sentAll: boolean, sentBytes?: number, totalBytes?: number) => void
  onStored: (sessionId: number) => void
  /** the server's message; a duplicate names the session that already holds the file */
  onRefused: (message: string, duplicateOf: number | null) => void
  onLost: () => void
  /** what the upload is doing now (compressing, then sending) */
  onPhase?: (phase: string) => void
}

/** Engines, events and saved column profiles for a logger import; saving a profile and sending the file. */
export async function useLoggerImport() {
  const [engines, events, profiles] = await Promise.all([
    useFetch<EngineSummaryDto[]>('/api/engines', { key: 'import-engines', default: () => [] }),
    useFetch<EventDto[]>('/api/events', { key: 'import-events', default: () => [] }),
    useFetch<LoggerProfile[]>('/api/logger-profiles', { key: 'logger-profiles', default: () => [] }),
  ])

  const partBytes = Number(useRuntimeConfig().public.uploadPartBytes)

  async function saveProfile(name: string, header: string[], mapping: LoggerMapping) {
    await $fetch('/api/logger-profiles', { method: 'POST', body: { name, header, mapping } })
    await profiles.refresh()
    return profiles.data.value.find((p) => p.name === name) ?? null
  }

  /**
   * Sends the file in parts through the resumable upload (tus), gzip-compressed by the browser
   * (CompressionStream) when it can. A dropped connection is retried and goes on from the last
   * part the server holds, also after a reload: the same file compresses to the same bytes, and
   * the upload's address is kept in the browser under the file's fingerprint. Then the server
   * reads the finished upload into a session.
   */
  async function uploadLoggerFile(query: URLSearchParams, file: File, on: LoggerUploadHandlers) {
    let body: Blob = file
    let gzipped = false
    if (typeof CompressionStream !== 'undefined') {
      on.onPhase?.('Compressing')
      body = await new Response(file.stream().pipeThrough(new CompressionStream('gzip'))).blob()
      gzipped = true
    }
    on.onPhase?.('Uploading')
    const { Upload } = await import('tus-js-client')
    const upload = new Upload(body, {
      endpoint: '/api/uploads',
      chunkSize: partBytes,
      retryDelays: [0, 1000, 3000, 5000, 10000, 20000],
      metadata: { filename: file.name, ...(gzipped ? { encoding: 'gzip' } : {}) },
      fingerprint: async () => ['crankledger-upload', file.name, file.size, file.lastModified, body.size].join(':'),
      storeFingerprintForResuming: true,
      removeFingerprintOnSuccess: true,
      onProgress: (sent, total) => on.onProgress(total > 0 ? sent / total : null, false, sent, total),
      onError: () => on.onLost(),
      onSuccess: async () => {
        on.onProgress(1, true, body.size, body.size)
        on.onPhase?.('Reading the file on the server')
        try {
          const res = await $fetch<{ session: { id: number } }>(`${upload.url}/import?${query}`, { method: 'POST' })
          on.onStored(res.session.id)
        } catch (e: any) {
          on.onRefused(apiMessage(e, 'The import failed'), e?.statusCode === 409 && typeof e?.data?.data?.sessionId === 'number' ? e.data.data.sessionId : null)
        }
      },
    })
    const previous = await upload.findPreviousUploads()
    if (previous[0]) upload.resumeFromPreviousUpload(previous[0])
    upload.start()
  }

  return { engines: engines.data, events: events.data, profiles: profiles.data, refreshProfiles: profiles.refresh, saveProfile, uploadLoggerFile }
}
