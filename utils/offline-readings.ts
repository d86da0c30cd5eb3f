import { openDB, type DBSchema, type IDBPDatabase } from 'idb'

// Readings typed in the browser and not yet stored by the server, kept in IndexedDB so that a dropped
// connection, a closed tab or a reload loses none of them. The key grows with every reading added,
// so reading the store by key gives the order they were typed in.

/** waiting: not sent yet; conflict: someone else changed the reading meanwhile (the server's value kept in `current`). */
export type QueuedState = 'waiting' | 'conflict'

export interface QueuedReading {
  seq?: number
  /** whose and where: `u<userId>:teardown:<id>` or `u<userId>:oil` */
  scope: string
  /** what it changes; two readings of one key are sent in turn, the later one based on the earlier */
  target: string
  /** words for the list: the part and characteristic, or the engine and lab sample number */
  label: string
  method: 'PUT' | 'POST'
  url: string
  body: Record<string, unknown>
  typedAt: string
  state: QueuedState
  message?: string
  current?: unknown
}

interface OfflineDb extends DBSchema {
  readings: { key: number; value: QueuedReading; indexes: { scope: string } }
}

const DB_NAME = 'crankledger-offline'
let opening: Promise<IDBPDatabase<OfflineDb>> | null = null

function database() {
  opening ??= openDB<OfflineDb>(DB_NAME, 1, {
    upgrade(db) {
      const store = db.createObjectStore('readings', { keyPath: 'seq', autoIncrement: true })
      store.createIndex('scope', 'scope')
    },
  })
  return opening
}

/** Plain data only: IndexedDB cannot store Vue's reactive proxies. */
const plain = <T>(v: T): T => JSON.parse(JSON.stringify(v)) as T

export async function addQueuedReading(entry: Omit<QueuedReading, 'seq'>): Promise<number> {
  return (await database()).add('readings', plain(entry) as QueuedReading)
}

/** A scope's readings in the order they were typed. */
export async function queuedReadings(scope: string): Promise<QueuedReading[]> {
  const rows = await (await database()).getAllFromIndex('readings', 'scope', scope)
  return rows.sort((a, b) => a.seq! - b.seq!)
}

export async function putQueuedReading(entry: QueuedReading): Promise<void> {
  await (await database()).put('readings', plain(entry))
}

export async function removeQueuedReading(seq: number): Promise<void> {
  await (await database()).delete('readings', seq)
}
