import type { LoggerMapping } from '#shared/domain/logger-mapping'
import type { EngineSummaryDto, EventDto } from '#shared/types/fleet'

export interface LoggerProfile { id: number; name: string; headerSignature: string; mapping: LoggerMapping }

export interface LoggerUploadHandlers {
  /** share of the file sent, 0 to 1 */
  onProgress: (fraction: number | null, sentAll: boolean) => void
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

  async function saveProfile(name: string, header: string[], mapping: LoggerMapping) {
    await $fetch('/api/logger-profiles', { method: 'POST', body: { name, header, mapping } })
    await profiles.refresh()
    return profiles.data.value.find((p) => p.name === name) ?? null
  }

  /**
   * Sends the file gzip-compressed by the browser (CompressionStream) when it can, plain
   * otherwise; the server keeps the compressed bytes as they came and reads them as it receives.
   */
  async function uploadLoggerFile(query: URLSearchParams, file: File, on: LoggerUploadHandlers) {
    let body: Blob = file
    let gzipped = false
    if (typeof CompressionStream !== 'undefined') {
      on.onPhase?.('Compressing')
      body = await new Response(file.stream().pipeThrough(new CompressionStream('gzip'))).blob()
      gzipped = true
    }
    on.onPhase?.('Uploading and reading')
    // XMLHttpRequest for upload progress; the server reads the file as it arrives, so this is processing progress too.
    const xhr = new XMLHttpRequest()
    xhr.open('POST', `/api/imports?${query}`)
    xhr.setRequestHeader('content-type', 'text/csv')
    if (gzipped) xhr.setRequestHeader('content-encoding', 'gzip')
    xhr.upload.onprogress = (e) => on.onProgress(e.lengthComputable ? e.loaded / e.total : null, e.loaded === e.total)
    xhr.onload = () => {
      let res: any = null
      try {
        res = JSON.parse(xhr.responseText)
      } catch {}
      if (xhr.status === 201) on.onStored(res.session.id)
      else on.onRefused(res?.message ?? `The import failed (${xhr.status})`, xhr.status === 409 && typeof res?.data?.sessionId === 'number' ? res.data.sessionId : null)
    }
    xhr.onerror = () => on.onLost()
    xhr.send(body)
  }

  return { engines: engines.data, events: events.data, profiles: profiles.data, refreshProfiles: profiles.refresh, saveProfile, uploadLoggerFile }
}
