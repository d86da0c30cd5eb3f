import { createReadStream, statSync, existsSync } from 'node:fs'
import { createHash } from 'node:crypto'
import { isUtf8 } from 'node:buffer'
import { analyzeLoggerStream } from '../server/services/logger-csv'
import { BENCH_TRACE_CONFIG, traceCsvMapping, writeTraceFile } from './make-trace'
const f = '/tmp/qb-6h.csv'
async function main() {
  if (!existsSync(f)) await writeTraceFile(f, { hz: 100, seconds: 6 * 3600 })
  const size = statSync(f).size
  const mode = process.argv[2]
  const t0 = performance.now()
  if (mode === 'hash') {
    const h = createHash('sha256'); let u = true
    for await (const c of createReadStream(f)) { h.update(c as Buffer); u = u && isUtf8(c as Buffer) }
    h.digest('hex')
  } else if (mode === 'read') {
    for await (const c of createReadStream(f)) {}
  } else {
    await analyzeLoggerStream(createReadStream(f), traceCsvMapping(), BENCH_TRACE_CONFIG, { rowReader: 'scan' })
  }
  console.log(mode, (size / 1e6 / ((performance.now() - t0) / 1000)).toFixed(1), 'MB/s')
}
main()
