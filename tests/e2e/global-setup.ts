// Starts the server built by `npm test` once for every e2e and browser test file.
import { spawn, type ChildProcess } from 'node:child_process'
import { existsSync } from 'node:fs'

let server: ChildProcess | undefined

export async function setup() {
  const port = process.env.CL_TEST_PORT || '3390'
  if (!existsSync('.output/server/index.mjs')) throw new Error('No build found: run the suite with `npm test`, which builds first')
  server = spawn(process.execPath, ['.output/server/index.mjs'], {
    env: { ...process.env, PORT: port, NITRO_HOST: '127.0.0.1', NUXT_ALERTS_ENABLED: process.env.NUXT_ALERTS_ENABLED ?? 'false' },
    stdio: ['ignore', 'inherit', 'inherit'],
  })
  const deadline = Date.now() + 60_000
  for (;;) {
    try {
      const res = await fetch(`http://127.0.0.1:${port}/api/health`)
      if (res.ok) break
    } catch {}
    if (Date.now() > deadline) throw new Error('The test server did not become ready')
    await new Promise((r) => setTimeout(r, 250))
  }
}

export async function teardown() {
  if (!server) return
  server.kill('SIGTERM')
  await new Promise((r) => server!.once('exit', r))
}
