import type { LoggerMapping } from '#shared/domain/logger-mapping'
import type { LoggerProfile, LoggerUploadHandlers } from '~/composables/useLoggerImport'
import { inspectLoggerFile, profileMappingFor } from '~/composables/useLoggerPreview'

export interface BatchItem {
  file: File
  profileName: string | null
  mapping: LoggerMapping | null
  loggerStart: string | null
  state: 'ready' | 'no-profile' | 'unreadable' | 'sending' | 'stored' | 'refused'
  message: string
  progress: number
  sessionId: number | null
}

export interface BatchMeta { engineId: number; eventId: number | null; kind: string; startedAt: string; laps: string; confirmDate: boolean }

type Upload = (query: URLSearchParams, file: File, on: LoggerUploadHandlers) => Promise<void>

/**
 * Several logger files dropped at once: each is mapped by the saved profile its channel names
 * match and imported as its own session, one after another, each with its own result. A file
 * no profile matches is left for a single import, where its columns can be mapped.
 */
export function useLoggerBatch(profiles: Ref<LoggerProfile[]>, upload: Upload) {
  const items = ref<BatchItem[]>([])
  const running = ref(false)

  async function add(files: File[]) {
    items.value = []
    for (const file of files) {
      const item: BatchItem = { file, profileName: null, mapping: null, loggerStart: null, state: 'no-profile', message: '', progress: 0, sessionId: null }
      try {
        const inspected = await inspectLoggerFile(file, profiles.value)
        item.loggerStart = inspected.loggerStart
        if (inspected.profile) {
          item.profileName = inspected.profile.name
          item.mapping = profileMappingFor(inspected.profile, inspected)
          item.state = 'ready'
        } else item.message = 'No saved profile has these channel names: import this file alone to map it.'
      } catch (e) {
        item.state = 'unreadable'
        item.message = (e as Error).message
      }
      items.value.push(item)
    }
  }

  function send(item: BatchItem, meta: BatchMeta): Promise<void> {
    const mapping = { ...item.mapping!, columns: Object.fromEntries(Object.entries(item.mapping!.columns).filter(([, v]) => v)) }
    const q = new URLSearchParams({
      engineId: String(meta.engineId),
      eventId: meta.eventId ? String(meta.eventId) : '',
      kind: meta.kind,
      // the logger's own start where its metadata gives one
      startedAt: item.loggerStart ?? meta.startedAt,
      laps: meta.laps,
      confirmDate: String(meta.confirmDate),
      fileName: item.file.name,
      mapping: JSON.stringify(mapping),
    })
    item.state = 'sending'
    return new Promise((resolve) => {
      upload(q, item.file, {
        onProgress: (fraction) => {
          if (fraction !== null) item.progress = fraction
        },
        onStored: (sessionId) => {
          item.state = 'stored'
          item.sessionId = sessionId
          resolve()
        },
        onRefused: (message, duplicateOf) => {
          item.state = 'refused'
          item.message = message
          item.sessionId = duplicateOf
          resolve()
        },
        onLost: () => {
          item.state = 'refused'
          item.message = 'The connection was lost and retries ran out; drop the file again to go on from the last part received.'
          resolve()
        },
      })
    })
  }

  /** Imports every file a profile matched, one at a time. */
  async function importAll(meta: BatchMeta) {
    running.value = true
    try {
      for (const item of items.value) if (item.state === 'ready') await send(item, meta)
    } finally {
      running.value = false
    }
  }

  const ready = computed(() => items.value.filter((i) => i.state === 'ready').length)
  return { items, running, ready, add, importAll, clear: () => (items.value = []) }
}
