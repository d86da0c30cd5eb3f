import { addQueuedReading, putQueuedReading, queuedReadings, removeQueuedReading, type QueuedReading } from '~/utils/offline-readings'

/** A queued reading as the page shows it: `sent` lives only here, until the page has re-read what it changed. */
export interface OutboxEntry extends Omit<QueuedReading, 'state'> {
  state: QueuedReading['state'] | 'sent'
}

export interface OutboxOptions {
  /** `u<userId>:<page>`; null while nobody is signed in */
  scope: () => string | null
  /** re-read what the sent readings changed */
  onSent?: () => Promise<unknown> | unknown
}

const RETRY_MS = 15_000

/**
 * Readings written through IndexedDB: each is kept in the browser first, then sent in the order typed,
 * one at a time; a lost connection leaves the rest waiting (retried when the browser is back online,
 * every 15 s while some wait, and at the next visit). A 409 keeps the reading as a conflict with the
 * server's current value; any other refusal hands the reading back (`refusals`) with the server's message.
 */
export function useReadingOutbox(opts: OutboxOptions) {
  const entries = ref<OutboxEntry[]>([])
  const online = ref(true)
  const sendingSeq = ref<number | null>(null)
  /** why sending stopped (the server unreachable, the session ended); empty when it did not */
  const problem = ref('')
  const refusals = ref<Record<string, { message: string; body: Record<string, unknown> }>>({})
  let running: Promise<void> | null = null
  /** a reading was queued while a run was finishing (re-reading the page): run once more after it */
  let again = false
  let timer: ReturnType<typeof setInterval> | undefined

  const waiting = computed(() => entries.value.filter((e) => e.state === 'waiting'))
  const conflicts = computed(() => entries.value.filter((e) => e.state === 'conflict'))
  /** the latest reading typed for a target, whatever its state */
  const latestFor = (target: string) => entries.value.findLast((e) => e.target === target) ?? null

  async function reload() {
    const scope = opts.scope()
    const stored: OutboxEntry[] = scope ? await queuedReadings(scope) : []
    // Readings sent but not yet re-read stay shown, so a field does not flick back to the old value.
    const sent = entries.value.filter((e) => e.state === 'sent')
    entries.value = [...stored, ...sent].sort((a, b) => a.seq! - b.seq!)
  }

  async function queue(entry: Pick<QueuedReading, 'target' | 'label' | 'method' | 'url' | 'body'>) {
    const scope = opts.scope()
    if (!scope) throw new Error('Sign in again to record readings')
    delete refusals.value[entry.target]
    await addQueuedReading({ ...entry, scope, typedAt: new Date().toISOString(), state: 'waiting' })
    await reload()
    void flush()
  }

  function flush(): Promise<void> {
    if (running) {
      again = true
      return running
    }
    running = (async () => {
      do {
        again = false
        await sendInOrder()
      } while (again && waiting.value.length > 0)
    })().finally(() => {
      running = null
    })
    return running
  }

  async function sendInOrder() {
    let changed = false
    problem.value = ''
    try {
      for (;;) {
        const next = entries.value.find((e) => e.state === 'waiting')
        if (!next) break
        if (!navigator.onLine) {
          online.value = false
          break
        }
        sendingSeq.value = next.seq!
        let answer: any
        try {
          answer = await $fetch(next.url, { method: next.method, body: next.body })
        } catch (e: any) {
          const status: number | undefined = e?.statusCode ?? e?.status ?? e?.response?.status
          if (!status || status >= 500 || status === 401 || status === 429) {
            // Nothing was decided about this reading: it waits, and so do the ones typed after it.
            problem.value = status === 401 ? 'Your session has ended: sign in again in another tab; the readings stay here until then.' : 'The server could not be reached: the readings stay here and are sent when it answers.'
            break
          }
          changed = true
          if (status === 409) {
            const kept: QueuedReading = { ...(next as QueuedReading), state: 'conflict', message: apiMessage(e, 'Someone else changed this meanwhile'), current: e?.data?.data?.current ?? null }
            await putQueuedReading(kept)
            replace(kept)
          } else {
            await removeQueuedReading(next.seq!)
            refusals.value[next.target] = { message: apiMessage(e, 'The server refused the reading'), body: next.body }
            entries.value = entries.value.filter((x) => x.seq !== next.seq)
          }
          continue
        }
        changed = true
        // A later reading of the same target was typed on the version this one started from: it now follows this one.
        const version = typeof answer?.version === 'number' ? answer.version : undefined
        for (const later of entries.value) {
          if (version !== undefined && later.seq! > next.seq! && later.target === next.target && later.state === 'waiting' && later.body.baseVersion === next.body.baseVersion) {
            later.body = { ...later.body, baseVersion: version }
            await putQueuedReading(later as QueuedReading)
          }
        }
        await removeQueuedReading(next.seq!)
        replace({ ...next, state: 'sent' })
      }
    } finally {
      sendingSeq.value = null
    }
    if (changed) await opts.onSent?.()
    entries.value = entries.value.filter((e) => e.state !== 'sent')
    await reload()
  }

  function replace(entry: OutboxEntry) {
    entries.value = entries.value.map((e) => (e.seq === entry.seq ? entry : e))
  }

  /** Drops my reading (the other person's stays), or a waiting one I no longer want sent. */
  async function discard(entry: OutboxEntry) {
    await removeQueuedReading(entry.seq!)
    entries.value = entries.value.filter((e) => e.seq !== entry.seq)
    await opts.onSent?.()
  }

  /** Sends my reading over the other person's, now that I have seen theirs. */
  async function sendMine(entry: OutboxEntry) {
    const seen = (entry.current as { version?: number } | null)?.version ?? 0
    const again: QueuedReading = { ...(entry as QueuedReading), state: 'waiting', message: undefined, current: undefined, body: { ...entry.body, baseVersion: seen } }
    await putQueuedReading(again)
    replace(again)
    await flush()
  }

  const goneOnline = () => {
    online.value = true
    void flush()
  }
  const goneOffline = () => {
    online.value = false
  }
  onMounted(async () => {
    online.value = navigator.onLine
    window.addEventListener('online', goneOnline)
    window.addEventListener('offline', goneOffline)
    timer = setInterval(() => {
      if (waiting.value.length && navigator.onLine) void flush()
    }, RETRY_MS)
    await reload()
    void flush()
  })
  onBeforeUnmount(() => {
    window.removeEventListener('online', goneOnline)
    window.removeEventListener('offline', goneOffline)
    clearInterval(timer)
  })

  // reactive: a page hands the whole outbox to its components, which read it without `.value`
  return reactive({ entries, waiting, conflicts, online, sendingSeq, problem, refusals, latestFor, queue, flush, discard, sendMine })
}

export type ReadingOutbox = ReturnType<typeof useReadingOutbox>
