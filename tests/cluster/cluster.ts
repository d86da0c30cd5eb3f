// The cluster suite's pieces: the Galera nodes (db/galera.sh), an S3-compatible store (s3rver),
// app instances of the built server on their own ports, and maildev. scripts/test-cluster.sh has
// started the cluster and maildev and built the app; each test file starts the store and two instances.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { createHash } from 'node:crypto'
import { existsSync, readdirSync, statSync } from 'node:fs'
import { join, resolve } from 'node:path'
import knexFactory, { type Knex } from 'knex'
import S3rver from 's3rver'
import { knexConfig } from '../../db/knexfile'
import { DEMO_PASSWORD } from '../../db/seeds/demo'

const env = process.env
export const NODE_URLS = execFileSync('bash', ['db/galera.sh', 'urls'], { encoding: 'utf8' }).trim().split('\n')
export const S3_PORT = Number(env.CL_S3_PORT ?? 4591)
export const APP_PORTS = [Number(env.CL_CLUSTER_APP_A ?? 3466), Number(env.CL_CLUSTER_APP_B ?? 3467)] as const
export const MAILDEV_WEB = Number(env.CL_CLUSTER_MAILDEV_WEB ?? 1048)
export const S3_DIR = resolve('.data-test/s3')
export const BUCKET = 'crankledger'

export function galera(cmd: 'start' | 'stop' | 'kill' | 'status', node?: 1 | 2 | 3): string {
  return execFileSync('bash', ['db/galera.sh', cmd, ...(node ? [String(node)] : [])], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] })
}

export async function waitFor(fn: () => Promise<boolean>, ms: number, every = 250): Promise<boolean> {
  const end = Date.now() + ms
  while (Date.now() < end) {
    if (await fn().catch(() => false)) return true
    await new Promise((r) => setTimeout(r, every))
  }
  return false
}

/** A direct connection to one node, for the test's own counts (never through the app). */
export async function onNode<T>(node: 1 | 2 | 3, fn: (db: Knex) => Promise<T>): Promise<T> {
  const db = knexFactory(knexConfig(NODE_URLS[node - 1]))
  try {
    return await fn(db)
  } finally {
    await db.destroy()
  }
}

export async function count(node: 1 | 2 | 3, table: string, where: Record<string, unknown> = {}): Promise<number> {
  return onNode(node, async (db) => Number((await db(table).where(where).count({ n: '*' }).first())!.n))
}

export interface Store {
  stop(): Promise<void>
}

/** s3rver on loopback, its objects under .data-test/s3 (kept across a stop and start, as a real store's are). */
export async function startStore(): Promise<Store> {
  const server = new S3rver({ port: S3_PORT, address: '127.0.0.1', silent: true, directory: S3_DIR, configureBuckets: [{ name: BUCKET, configs: [] }] })
  await server.run()
  return {
    async stop() {
      const closed = new Promise<void>((r) => server.close(() => r()))
      // Kept-alive connections from the instances end too: the store is away, not merely closing.
      server.httpServer?.closeAllConnections()
      await closed
    },
  }
}

/** Objects stored under a key prefix (`logger`, `teardown`, ...), counted on the store's disk. */
export function storedObjects(prefix: string): string[] {
  const out: string[] = []
  const walk = (dir: string) => {
    if (!existsSync(dir)) return
    for (const f of readdirSync(dir)) {
      const p = join(dir, f)
      if (statSync(p).isDirectory()) walk(p)
      else if (f.endsWith('._S3rver_object')) out.push(p)
    }
  }
  walk(join(S3_DIR, BUCKET, prefix))
  return out
}

export interface App {
  base: string
  process: ChildProcess
  log: string[]
  /** When the instance reported moving its writer to another node (ms since the epoch). */
  switches: number[]
  stop(): Promise<void>
}

/** One instance of the built server on the cluster (writer node 1, then 2, then 3) and the store. */
export async function startApp(port: number, extra: Record<string, string> = {}): Promise<App> {
  const base = `http://127.0.0.1:${port}`
  const log: string[] = []
  const switches: number[] = []
  const child = spawn(process.execPath, ['.output/server/index.mjs'], {
    env: {
      ...env,
      PORT: String(port),
      NITRO_HOST: '127.0.0.1',
      NUXT_PUBLIC_URL: base,
      NUXT_DATABASE_URL: NODE_URLS[0],
      NUXT_DATABASE_FAILOVER_URLS: NODE_URLS.slice(1).join(','),
      NUXT_S3_ENDPOINT: `http://127.0.0.1:${S3_PORT}`,
      NUXT_S3_BUCKET: BUCKET,
      NUXT_S3_ACCESS_KEY_ID: 'S3RVER',
      NUXT_S3_SECRET_ACCESS_KEY: 'S3RVER',
      NUXT_ALERTS_ENABLED: 'false',
      ...extra,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  const read = (d: Buffer) => {
    log.push(String(d))
    if (String(d).includes('writes now go to')) switches.push(Date.now())
  }
  child.stdout!.on('data', read)
  child.stderr!.on('data', read)
  const ready = await waitFor(async () => (await fetch(`${base}/api/health`)).ok, 60_000)
  if (!ready) throw new Error(`instance on ${port} did not become ready:\n${log.join('')}`)
  return {
    base,
    process: child,
    log,
    switches,
    async stop() {
      if (child.exitCode !== null) return
      const exited = new Promise((r) => child.once('exit', r))
      child.kill('SIGTERM')
      await exited
    },
  }
}

export async function signIn(base: string, email: string): Promise<string> {
  const ask = () => fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: base }, body: JSON.stringify({ email, password: DEMO_PASSWORD }) })
  // A pooled keep-alive connection the instance closed meanwhile fails before any answer: that is
  // the transport, not the app, so the sign-in is asked once more on a new connection.
  const res = await ask().catch(() => ask())
  if (res.status !== 200) throw new Error(`sign-in of ${email} answered ${res.status}`)
  return res.headers.getSetCookie().find((c) => c.startsWith('nuxt-session='))!.split(';')[0]!
}

/** A steady-running logger file; `n` moves the rpm so that every file's bytes differ. */
export function loggerCsv(n: number, rows = 2_000): Buffer {
  const lines = ['time_s,engine_rpm']
  for (let i = 0; i < rows; i++) lines.push(`${(i / 10).toFixed(1)},${6000 + (n % 500) + (i % 7) * 10}`)
  return Buffer.from(`${lines.join('\n')}\n`)
}

export const sha256 = (b: Buffer) => createHash('sha256').update(b).digest('hex')

const MAPPING = JSON.stringify({ columns: { time: 'time_s', rpm: 'engine_rpm' }, units: {}, decimal: '.' })

export function importUrl(base: string, engineId: number, fileName: string) {
  const q = new URLSearchParams({ engineId: String(engineId), kind: 'test', startedAt: new Date(Date.now() - 3_600_000).toISOString(), fileName, mapping: MAPPING })
  return `${base}/api/imports?${q}`
}

export async function importFile(base: string, cookie: string, engineId: number, body: Buffer | ReadableStream, fileName = 'cluster.csv') {
  const res = await fetch(importUrl(base, engineId, fileName), { method: 'POST', headers: { cookie, origin: base, 'content-type': 'text/csv' }, body, duplex: 'half' } as RequestInit)
  return { status: res.status, retryAfter: res.headers.get('retry-after'), body: (await res.json().catch(() => ({}))) as any }
}
