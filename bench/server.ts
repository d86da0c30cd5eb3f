// What the benchmarks share: the test MariaDB instance and the built server started against it.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { DEMO_PASSWORD } from '../db/seeds/demo'

export function sh(cmd: string, args: string[], env: Record<string, string> = {}) {
  return execFileSync(cmd, args, { env: { ...process.env, ...env }, encoding: 'utf8' }).trim()
}

/** Starts the test instance and answers its URL. */
export function startTestDb(): string {
  sh('bash', ['db/mariadb.sh', 'start', 'test'])
  return sh('bash', ['db/mariadb.sh', 'url', 'test'])
}

export interface BenchServer {
  base: string
  process: ChildProcess
  stop(): Promise<void>
}

/** The built server (built first if missing) on loopback, with its own storage folder; waits until it answers. */
export async function startServer(dbUrl: string, port: number): Promise<BenchServer> {
  if (!existsSync('.output/server/index.mjs')) sh('npx', ['nuxt', 'build'])
  const base = `http://127.0.0.1:${port}`
  const storage = mkdtempSync(join(tmpdir(), 'crankledger-bench-files-'))
  // BENCH_NODE_ARGS: flags for the server's node, e.g. "--cpu-prof --cpu-prof-dir=/tmp/prof" to see where its time goes
  const nodeArgs = (process.env.BENCH_NODE_ARGS ?? '').split(' ').filter(Boolean)
  const child = spawn(process.execPath, [...nodeArgs, '.output/server/index.mjs'], {
    env: { ...process.env, PORT: String(port), NITRO_HOST: '127.0.0.1', NUXT_DATABASE_URL: dbUrl, NUXT_PUBLIC_URL: base, NUXT_SESSION_PASSWORD: 'bench-session-password-0123456789abcdef', NUXT_ALERTS_ENABLED: 'false', NUXT_STORAGE_DIR: storage },
    stdio: ['ignore', 'ignore', 'inherit'],
  })
  for (let i = 0; i < 240; i++) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) break
    } catch {}
    await new Promise((r) => setTimeout(r, 250))
  }
  return {
    base,
    process: child,
    async stop() {
      const exited = new Promise((r) => child.once('exit', r))
      child.kill('SIGTERM')
      await exited
      rmSync(storage, { recursive: true, force: true })
      sh('bash', ['db/mariadb.sh', 'stop', 'test'])
    },
  }
}

export async function signIn(base: string, email: string): Promise<string> {
  const res = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', origin: base }, body: JSON.stringify({ email, password: DEMO_PASSWORD }) })
  if (!res.ok) throw new Error(`sign-in of ${email} failed: ${res.status}`)
  return res.headers.getSetCookie().find((c) => c.startsWith('nuxt-session='))!.split(';')[0]!
}

/** A process's resident memory now and at its peak so far (VmRSS, VmHWM), MB; Linux. */
export function processMemoryMB(pid: number): { resident: number; peak: number } {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8')
  const mb = (field: string) => Number(new RegExp(`${field}:\\s+(\\d+) kB`).exec(status)![1]) / 1024
  return { resident: mb('VmRSS'), peak: mb('VmHWM') }
}

/** The same as text: "resident N MB, peak M MB". */
export function memoryText(pid: number): string {
  const m = processMemoryMB(pid)
  return `resident ${m.resident.toFixed(0)} MB, peak ${m.peak.toFixed(0)} MB`
}
