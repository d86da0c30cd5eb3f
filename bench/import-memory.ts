// `npm run bench:import-memory`: three different 6 h logger files (10 channels, 100 Hz, about
// 112 MB each) imported one after another, plain, into one built server; the server's resident
// memory after each and its peak. Shows whether memory is held after an import (it would grow
// from one import to the next) or only taken while the collector lets the heap grow (it stays
// level). BENCH_NODE_ARGS passes flags to the server, e.g. --max-old-space-size=128; BENCH_HOURS
// changes the file length. Uses the test instance, reset to the demo: never beside `npm test`.
import { createReadStream, mkdtempSync, rmSync, statSync } from 'node:fs'
import { request as httpRequest } from 'node:http'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { traceCsvMapping, writeTraceFile } from './make-trace'
import { memoryText, sh, signIn, startServer, startTestDb } from './server'

const HOURS = Number(process.env.BENCH_HOURS ?? 6)

function postFile(url: string, headers: Record<string, string>, file: string): Promise<number> {
  return new Promise((answer, fail) => {
    const req = httpRequest(url, { method: 'POST', headers: { ...headers, 'content-type': 'text/csv', 'content-length': String(statSync(file).size) } }, (res) => {
      res.resume()
      res.on('end', () => answer(res.statusCode ?? 0))
    })
    req.on('error', fail)
    createReadStream(file, { highWaterMark: 1 << 20 }).pipe(req)
  })
}

const dir = mkdtempSync(join(tmpdir(), 'crankledger-import-memory-'))
try {
  const files: string[] = []
  for (const seed of [1, 2, 3]) {
    const file = join(dir, `trace-${seed}.csv`)
    await writeTraceFile(file, { hz: 100, seconds: HOURS * 3600, channels: 10, seed })
    files.push(file)
  }
  console.log(`three ${HOURS} h files of ${(statSync(files[0]!).size / 1e6).toFixed(0)} MB; server flags: ${process.env.BENCH_NODE_ARGS || 'none'}`)
  const url = startTestDb()
  sh('npx', ['tsx', 'db/cli.ts', 'reset'], { NUXT_DATABASE_URL: url })
  const server = await startServer(url, Number(process.env.BENCH_PORT ?? 3398))
  try {
    const pid = server.process.pid!
    const cookie = await signIn(server.base, 'race@redfern.test')
    const engines = (await (await fetch(`${server.base}/api/engines`, { headers: { cookie } })).json()) as { id: number; serial: string }[]
    const engine = engines.find((e) => e.serial === 'KT4-2102')!
    console.log(`before the first import: ${memoryText(pid)}`)
    for (const [i, file] of files.entries()) {
      // test sessions on days that are not yet logged, so that no date check or duplicate refuses them
      const query = new URLSearchParams({ engineId: String(engine.id), kind: 'test', startedAt: new Date(Date.now() - 86_400_000 * (i + 1)).toISOString(), fileName: `trace-${i + 1}.csv`, mapping: JSON.stringify(traceCsvMapping()) })
      const status = await postFile(`${server.base}/api/imports?${query}`, { cookie, origin: server.base }, file)
      if (status !== 201) throw new Error(`import ${i + 1} answered ${status}`)
      console.log(`after import ${i + 1}: ${memoryText(pid)}`)
    }
  } finally {
    await server.stop()
  }
} finally {
  rmSync(dir, { recursive: true, force: true })
}
