import { createReadStream, statSync } from 'node:fs'
import { analyzeLoggerStream } from '../server/services/logger-csv'
import { BENCH_TRACE_CONFIG, traceCsvMapping } from './make-trace'
const f = '/tmp/qb-1h.csv'
const size = statSync(f).size
async function main() {
for (let i = 0; i < 3; i++) {
  const t0 = performance.now()
  const r = await analyzeLoggerStream(createReadStream(f, { highWaterMark: 1 << 20 }), traceCsvMapping(), BENCH_TRACE_CONFIG, { rowReader: 'scan' })
  console.log((size / 1e6 / ((performance.now() - t0) / 1000)).toFixed(1), 'MB/s', r.rows)
}
}
main()
