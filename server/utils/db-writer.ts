// The writer endpoint when the database is a Galera cluster: every query, write and named lock of
// this instance goes to one node (GET_LOCK and SELECT ... FOR UPDATE are per node). When that node
// stops answering, or leaves the primary component, the instance moves to the first other node, in
// the configured order, that is synced and primary. Every instance walks the same list in the same
// order, so all of them land on the same node. Requests that meet the switch answer 503 with
// Retry-After (server/utils/db.ts); nothing is retried behind the client's back.
import type { Knex } from 'knex'
import mysql from 'mysql2/promise'
import { knexConfig } from '../../db/knexfile'

export interface DatabaseWriter {
  /** The node every connection of this instance goes to now. */
  url(): string
  /** Grows by one at every switch. */
  readonly generation: number
  /** An error said the database is away: look now rather than at the next probe. */
  suspect(): void
  /** Resolves once the writer has been looked at (after a suspicion: switched, or found alive). */
  settled(): Promise<void>
  stop(): void
}

const PROBE_TIMEOUT_MS = 5_000
// A probe that merely times out (a busy machine) is not a dead writer: only this many in a row move it.
const TIMEOUTS_TO_SWITCH = 3

function hostPort(url: string) {
  const u = new URL(url)
  return { host: u.hostname, port: Number(u.port || 3306) }
}

/**
 * A node may take writes when it answers and, if it is a Galera node, is synced in the primary
 * component: 'yes'; refused or not synced: 'no'; no answer in time: 'timeout'.
 */
export async function nodeTakesWrites(url: string): Promise<'yes' | 'no' | 'timeout'> {
  let conn: mysql.Connection | undefined
  const timeout = new Promise<'timeout'>((resolve) => setTimeout(() => resolve('timeout'), PROBE_TIMEOUT_MS).unref())
  const probe = (async () => {
    try {
      conn = await mysql.createConnection({ uri: url, connectTimeout: PROBE_TIMEOUT_MS })
      const [rows] = await conn.query("SHOW GLOBAL STATUS WHERE Variable_name IN ('wsrep_ready', 'wsrep_cluster_status', 'wsrep_local_state')")
      const status = new Map((rows as { Variable_name: string; Value: string }[]).map((r) => [r.Variable_name, r.Value]))
      // A server without wsrep (or with it off) reports nothing of this: it is its own writer.
      if (!status.has('wsrep_cluster_status') || status.get('wsrep_cluster_status') === 'Disconnected') return 'yes'
      return status.get('wsrep_ready') === 'ON' && status.get('wsrep_cluster_status') === 'Primary' && status.get('wsrep_local_state') === '4' ? 'yes' : 'no'
    } catch (error) {
      return (error as { code?: string }).code === 'ETIMEDOUT' ? 'timeout' : 'no'
    } finally {
      conn?.destroy()
    }
  })()
  return Promise.race([probe, timeout])
}

export function createDatabaseWriter(urls: string[], probeMs: number, log: (m: string) => void = console.warn): DatabaseWriter {
  let index = 0
  let generation = 0
  let looking: Promise<void> | null = null
  let timeouts = 0

  async function look() {
    const writer = await nodeTakesWrites(urls[index]!)
    if (writer === 'yes') {
      timeouts = 0
      return
    }
    if (writer === 'timeout' && ++timeouts < TIMEOUTS_TO_SWITCH) return
    for (let i = 0; i < urls.length; i++) {
      if (i === index) continue
      if ((await nodeTakesWrites(urls[i]!)) === 'yes') {
        timeouts = 0
        const from = hostPort(urls[index]!)
        index = i
        generation++
        const to = hostPort(urls[i]!)
        log(`[crankledger] database writer ${from.host}:${from.port} does not take writes; writes now go to ${to.host}:${to.port}`)
        return
      }
    }
  }
  function lookOnce(): Promise<void> {
    if (!looking) looking = look().finally(() => (looking = null))
    return looking
  }
  const timer = setInterval(() => void lookOnce(), probeMs)
  timer.unref()

  return {
    url: () => urls[index]!,
    get generation() {
      return generation
    },
    suspect: () => void lookOnce(),
    settled: () => looking ?? Promise.resolve(),
    stop: () => clearInterval(timer),
  }
}

/**
 * Knex settings whose connections follow the writer: new connections go to the current node, and a
 * pooled connection to any other node is dropped when it is next handed out.
 */
export function writerKnexConfig(writer: DatabaseWriter): Knex.Config {
  const base = knexConfig(writer.url())
  const { uri: _uri, ...connection } = base.connection as Knex.MySql2ConnectionConfig & { uri: string }
  return {
    ...base,
    connection: () => {
      const seen = writer.generation
      return { ...connection, uri: writer.url(), expirationChecker: () => writer.generation !== seen } as Knex.MySql2ConnectionConfig
    },
    pool: {
      ...base.pool,
      validate: (conn: { config?: { host?: string; port?: number } }) => {
        const { host, port } = hostPort(writer.url())
        return conn.config?.host === host && Number(conn.config?.port) === port
      },
    } as Knex.PoolConfig,
  }
}
