import { createReadStream, statSync } from 'node:fs'
import { analyzeLoggerStream } from '../server/services/logger-csv'
import { BENCH_TRACE_CONFIG, traceCsvMapping, writeTraceFile } from './make-trace'
const f = '/tmp/qb-1h.csv'
await writeTraceFile(f, { hz: 100, seconds: 3600 })
const size = statSync(f).size
for (const rr of ['scan', 'papaparse', 'scan', 'papaparse'] as const) {
  const t0 = performance.now()
  const r = await analyzeLoggerStream(createReadStream(f, { highWaterMark: 1 << 20 }), traceCsvMapping(), BENCH_TRACE_CONFIG, { rowReader: rr })
  const s = (performance.now() - t0) / 1000
  console.log(rr, (size / 1e6 / s).toFixed(1), 'MB/s', r.rows, r.summary.runningSeconds)
}
