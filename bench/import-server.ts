// Whole imports through the built server (part of `npm run bench:import`): the 6 h file sent
// plain in one request, and a race-length file of about N GB (60 channels, 100 Hz) sent
// gzip-compressed in parts through the resumable upload, as the import page sends it. Each is
// timed from the first byte sent to the session's answer; the server's peak RSS is read from
// /proc at the end. Uses the test MariaDB instance (reset to the demo data): never beside `npm test`.

import { createReadStream, createWriteStream, openSync, readSync, closeSync, statSync } from 'node:fs'
import { request as httpRequest } from 'node:http'
import { join } from 'node:path'
import { pipeline } from 'node:stream/promises'
import { createGzip } from 'node:zlib'
import { traceCsvMapping, writeTraceFile } from './make-trace'
import { processMemoryMB, sh, signIn, startServer, startTestDb } from './server'

const PART_BYTES = 8 * 1024 * 1024

function post(url: string, headers: Record<string, string>, body: Buffer | string | NodeJS.ReadableStream): Promise<{ status: number; text: string; headers: Record<string, string | string[] | undefined> }> {
  return new Promise((resolveAnswer, reject) => {
    const req = httpRequest(url, { method: headers['x-method'] ?? 'POST', headers }, (res) => {
      let text = ''
      res.setEncoding('utf8')
      res.on('data', (c: string) => (text += c))
      res.on('end', () => resolveAnswer({ status: res.statusCode ?? 0, text, headers: res.headers }))
    })
    req.on('error', reject)
    if (typeof body === 'string' || Buffer.isBuffer(body)) req.end(body)
    else body.pipe(req)
  })
}

export async function serverImports(sixHourFile: string, dir: string, bigGb: number) {
  const url = startTestDb()
  sh('npx', ['tsx', 'db/cli.ts', 'reset'], { NUXT_DATABASE_URL: url })
  const server = await startServer(url, Number(process.env.CL_BENCH_PORT ?? 3397))
  try {
    const base = server.base
    const cookie = await signIn(base, 'race@redfern.test')
    const engines = (await (await fetch(`${base}/api/engines`, { headers: { cookie } })).json()) as { id: number; serial: string }[]
    const engine = engines.find((e) => e.serial === 'KT4-2102')!
    const query = (name: string) => new URLSearchParams({ engineId: String(engine.id), kind: 'test', startedAt: new Date().toISOString(), fileName: name, mapping: JSON.stringify(traceCsvMapping()) })

    // 1. the 6 h file in one plain request
    let t0 = performance.now()
    const plain = await post(`${base}/api/imports?${query('trace-6h.csv')}`, { cookie, origin: base, 'content-type': 'text/csv', 'content-length': String(statSync(sixHourFile).size) }, createReadStream(sixHourFile, { highWaterMark: 1 << 20 }))
    if (plain.status !== 201) throw new Error(`import failed: ${plain.status} ${plain.text}`)
    console.log(`whole import of the 6 h file through the server, plain (upload, analysis, storage, database): ${((performance.now() - t0) / 1000).toFixed(2)} s (target < 5 s)`)

    if (!(bigGb > 0)) return
    // 2. about bigGb GB, 60 channels: written, compressed as the browser would, then sent in parts
    const seconds = Math.round((bigGb * 1e9) / (100 * 345))
    const big = join(dir, 'race.csv')
    let t = performance.now()
    await writeTraceFile(big, { hz: 100, seconds, channels: 60, seed: 24 })
    const size = statSync(big).size
    console.log(`race file: ${(size / 1e9).toFixed(2)} GB, ${seconds * 100} rows of 60 channels (${(seconds / 3600).toFixed(1)} h at 100 Hz; generated in ${((performance.now() - t) / 1000).toFixed(0)} s)`)
    t = performance.now()
    const gz = `${big}.gz`
    await pipeline(createReadStream(big, { highWaterMark: 1 << 20 }), createGzip({ level: 1 }), createWriteStream(gz))
    const gzSize = statSync(gz).size
    console.log(`  compressed on the client (gzip level 1, not timed below): ${(gzSize / 1e6).toFixed(0)} MB in ${((performance.now() - t) / 1000).toFixed(1)} s`)

    t0 = performance.now()
    const created = await post(`${base}/api/uploads`, { cookie, origin: base, 'tus-resumable': '1.0.0', 'upload-length': String(gzSize), 'upload-metadata': `filename ${Buffer.from('race.csv').toString('base64')},encoding ${Buffer.from('gzip').toString('base64')}` }, '')
    if (created.status !== 201) throw new Error(`upload not created: ${created.status} ${created.text}`)
    const location = String(created.headers.location)
    const fd = openSync(gz, 'r')
    const part = Buffer.alloc(PART_BYTES)
    for (let offset = 0; offset < gzSize; ) {
      const n = readSync(fd, part, 0, PART_BYTES, offset)
      const res = await post(`${base}${location}`, { cookie, origin: base, 'x-method': 'PATCH', 'tus-resumable': '1.0.0', 'upload-offset': String(offset), 'content-type': 'application/offset+octet-stream', 'content-length': String(n) }, part.subarray(0, n))
      if (res.status !== 204) throw new Error(`part at ${offset}: ${res.status} ${res.text}`)
      offset += n
    }
    closeSync(fd)
    const uploaded = performance.now()
    const imported = await post(`${base}${location}/import?${query('race.csv')}`, { cookie, origin: base }, '')
    if (imported.status !== 201) throw new Error(`import failed: ${imported.status} ${imported.text}`)
    const done = performance.now()
    const session = (JSON.parse(imported.text) as { session: { runningSeconds: number } }).session
    console.log(
      `whole import of the ${(size / 1e9).toFixed(2)} GB race file, compressed in ${Math.ceil(gzSize / PART_BYTES)} parts of 8 MiB: ` +
        `${((done - t0) / 1000).toFixed(1)} s (upload ${((uploaded - t0) / 1000).toFixed(1)} s, reading and storing ${((done - uploaded) / 1000).toFixed(1)} s; target < 30 s); ` +
        `server peak RSS ${processMemoryMB(server.process.pid!).peak.toFixed(0)} MB (target < 300 MB); running time found ${(session.runningSeconds / 3600).toFixed(2)} h`,
    )
  } finally {
    await server.stop()
  }
}
