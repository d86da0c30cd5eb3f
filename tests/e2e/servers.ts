// Extra app processes beside the one the suite runs (server A): the same build on the same
// database, with their own settings, as another instance behind a load balancer would be.
import { spawn, type ChildProcess } from 'node:child_process'
import { createServer } from 'node:net'

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer()
    s.once('error', reject)
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port
      s.close(() => resolve(port))
    })
  })
}

export interface ExtraServer {
  base: string
  process: ChildProcess
  stop(): Promise<void>
}

/** Starts `.output/server/index.mjs` on a free port with `env` over the suite's environment. */
export async function startServer(env: Record<string, string> = {}): Promise<ExtraServer> {
  const port = await freePort()
  const base = `http://127.0.0.1:${port}`
  const child = spawn(process.execPath, ['.output/server/index.mjs'], {
    // same database, session secret and file store as server A; the scheduled job stays off
    env: { ...process.env, PORT: String(port), NITRO_HOST: '127.0.0.1', NUXT_PUBLIC_URL: base, NUXT_ALERTS_ENABLED: 'false', ...env },
    stdio: ['ignore', 'ignore', 'inherit'],
  })
  const deadline = Date.now() + 60_000
  for (;;) {
    try {
      if ((await fetch(`${base}/api/health`)).ok) break
    } catch {}
    if (child.exitCode !== null) throw new Error(`the extra server exited with ${child.exitCode}`)
    if (Date.now() > deadline) throw new Error('the extra server did not become ready')
    await new Promise((r) => setTimeout(r, 250))
  }
  return {
    base,
    process: child,
    async stop() {
      if (child.exitCode !== null) return
      const exited = new Promise((r) => child.once('exit', r))
      child.kill('SIGTERM')
      await exited
    },
  }
}
