// Import benchmark: analyzeLoggerStream against papaparse alone and udsv alone on the same
// synthetic 100 Hz logger files (10 channels for 1 h and 6 h, 60 channels for 1 h). Each
// measurement runs in a fresh child process so its peak RSS is its own (see child()); then
// whole imports through the server (import-server.ts).
// Run: npx tsx bench/import.ts [--keep] [--runs N] [--no-server] [--big-gb N]

import { spawnSync } from 'node:child_process'
import { closeSync, createReadStream, fsyncSync, mkdtempSync, openSync, readSync, rmSync, statSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import Papa from 'papaparse'
import { inferSchema, initParser } from 'udsv'
import { analyzeLoggerStream } from '../server/services/logger-csv'
import { BENCH_TRACE_CONFIG, traceCsvMapping, writeTraceFile } from './make-trace'
import { serverImports } from './import-server'

const HZ = 100
// The short file gets more pairs: a third of a second is easily disturbed on a shared machine.
const FILES = [
  { name: '1h', seconds: 3600, runs: 9, channels: 10 as const },
  { name: '6h', seconds: 6 * 3600, runs: 5, channels: 10 as const },
  { name: '1h-60ch', seconds: 3600, runs: 5, channels: 60 as const },
]
const MODES = ['crankledger', 'papaparse', 'udsv'] as const
type Mode = typeof MODES[number]

interface Measurement { mode: Mode; seconds: number; rows: number; bytes: number; maxRssMB: number }

/** Reads `file` (or the first `endByte` bytes) in one mode; answers the data rows read. */
async function readIn(mode: Mode, file: string, endByte?: number): Promise<number> {
  if (mode === 'crankledger') {
    const r = await analyzeLoggerStream(createReadStream(file, { end: endByte }), traceCsvMapping(), BENCH_TRACE_CONFIG)
    return r.rows
  }
  // papaparse tuned as in the stack notes: no header mode, no typing, chunked, nothing kept
  let rows = 0
  await new Promise<void>((resolve, reject) => {
    Papa.parse(createReadStream(file, { encoding: 'utf8', end: endByte }) as unknown as File, {
      header: false,
      delimiter: ',',
      newline: '\n',
      chunk: (res: Papa.ParseResult<string[]>) => { rows += res.data.length },
      complete: () => resolve(),
      error: (e: Error) => reject(e),
    })
  })
  if (mode === 'udsv') {
    // udsv alone, strings out, nothing kept (its incremental API takes text chunks)
    let parser: ReturnType<typeof initParser> | null = null
    let n = 0
    const count = () => { n++ }
    for await (const chunk of createReadStream(file, { encoding: 'utf8', end: endByte, highWaterMark: 1 << 20 }) as AsyncIterable<string>) {
      parser ??= initParser(inferSchema(chunk))
      parser.chunk<string[]>(chunk, parser.stringArrs as (s: string) => string[][], count)
    }
    parser?.end()
    return n
  }
  return rows - 1 // header
}

/** Byte offset of the line break that ends the tenth data row. */
function tenthRowEnd(file: string): number {
  const head = Buffer.alloc(4096)
  const fd = openSync(file, 'r')
  readSync(fd, head, 0, head.length, 0)
  closeSync(fd)
  let at = -1
  for (let i = 0; i < 11; i++) at = head.indexOf(10, at + 1)
  return at
}

/**
 * One timed read, the first file of a fresh process. The first ten rows are read before,
 * untimed, in the same mode: one-time set-up (module code, the mapping schema's
 * compilation) is paid once by a server, not by each file it reads.
 */
async function child(mode: Mode, file: string): Promise<void> {
  const bytes = statSync(file).size
  await readIn(mode, file, tenthRowEnd(file))
  const start = process.hrtime.bigint()
  const rows = await readIn(mode, file)
  const seconds = Number(process.hrtime.bigint() - start) / 1e9
  const maxRssMB = process.resourceUsage().maxRSS / 1024
  const m: Measurement = { mode, seconds, rows, bytes, maxRssMB }
  process.stdout.write(JSON.stringify(m) + '\n')
}

function measure(mode: Mode, file: string): Measurement {
  const script = fileURLToPath(import.meta.url)
  const r = spawnSync(process.execPath, [...process.execArgv, script, '--child', mode, file], { encoding: 'utf8' })
  if (r.status !== 0) throw new Error(`child ${mode} failed: ${r.stderr}`)
  const line = r.stdout.trim().split('\n').pop()!
  return JSON.parse(line) as Measurement
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b)
  return s[Math.floor(s.length / 2)]!
}

/**
 * The two modes alternate run by run, so a slow spell of this shared machine falls on both;
 * the ratio is taken within each pair and the median pair is reported.
 */
function compare(path: string, runs: number): Record<Mode, Measurement> {
  const runsOf: Record<Mode, Measurement[]> = { crankledger: [], papaparse: [], udsv: [] }
  const ratios: number[] = []
  const udsvRatios: number[] = []
  // one round first, not counted: the machine settles after the file was written
  for (const mode of MODES) measure(mode, path)
  for (let i = 0; i < runs; i++) {
    const order: Mode[] = i % 2 === 0 ? [...MODES] : [...MODES].reverse()
    for (const mode of order) runsOf[mode].push(measure(mode, path))
    ratios.push(runsOf.papaparse[i]!.seconds / runsOf.crankledger[i]!.seconds)
    udsvRatios.push(runsOf.udsv[i]!.seconds / runsOf.crankledger[i]!.seconds)
  }
  const out = {} as Record<Mode, Measurement>
  for (const mode of MODES) {
    const ms = runsOf[mode]
    const m: Measurement = {
      mode,
      seconds: median(ms.map((x) => x.seconds)),
      rows: ms[0]!.rows,
      bytes: ms[0]!.bytes,
      maxRssMB: Math.max(...ms.map((x) => x.maxRssMB)),
    }
    out[mode] = m
    console.log(
      `  ${mode.padEnd(12)} ${(m.bytes / 1e6 / m.seconds).toFixed(1).padStart(6)} MB/s  ` +
        `${(m.rows / m.seconds / 1e6).toFixed(2)} M rows/s  peak RSS ${m.maxRssMB.toFixed(0)} MB  ` +
        `(median of ${runs}: ${ms.map((x) => x.seconds.toFixed(2)).join(', ')} s)`,
    )
  }
  const sorted = [...ratios].sort((a, b) => a - b)
  // Noise here only ever slows a run down, so the best runs show each mode's own speed.
  const fastest = (mode: Mode) => Math.min(...runsOf[mode].map((x) => x.seconds))
  console.log(
    `  ratio crankledger / papaparse alone: ${median(ratios).toFixed(2)} (target >= 1.5; ` +
      `median of ${runs} rounds, range ${sorted[0]!.toFixed(2)}-${sorted[sorted.length - 1]!.toFixed(2)}; ` +
      `best runs ${(fastest('papaparse') / fastest('crankledger')).toFixed(2)})`,
  )
  console.log(`  ratio crankledger / udsv alone: ${median(udsvRatios).toFixed(2)} (best runs ${(fastest('udsv') / fastest('crankledger')).toFixed(2)})`)
  return out
}

async function main(): Promise<void> {
  const args = process.argv.slice(2)
  if (args[0] === '--child') return child(args[1] as Mode, args[2]!)
  const runsAt = args.indexOf('--runs')
  const runsArg = runsAt >= 0 ? Number(args[runsAt + 1]) : undefined
  const dir = mkdtempSync(join(tmpdir(), 'crankledger-bench-'))
  try {
    const results: Record<string, Record<Mode, Measurement>> = {}
    for (const f of FILES) {
      const path = join(dir, `trace-${f.name}.csv`)
      const t0 = Date.now()
      await writeTraceFile(path, { hz: HZ, seconds: f.seconds, channels: f.channels })
      // on disk before timing starts, so no write-back competes with the first runs
      const fd = openSync(path, 'r')
      fsyncSync(fd)
      closeSync(fd)
      const size = statSync(path).size
      console.log(`${f.name}: ${(size / 1e6).toFixed(1)} MB, ${f.seconds * HZ} rows (generated in ${((Date.now() - t0) / 1000).toFixed(1)} s)`)
      results[f.name] = compare(path, runsArg ?? f.runs)
    }
    const rss1 = results['1h']!.crankledger.maxRssMB
    const rss6 = results['6h']!.crankledger.maxRssMB
    console.log(`peak RSS 6h / 1h (crankledger): ${(rss6 / rss1).toFixed(2)} (target <= 1.2)`)
    if (!args.includes('--no-server')) {
      const bigAt = args.indexOf('--big-gb')
      await serverImports(join(dir, 'trace-6h.csv'), dir, bigAt >= 0 ? Number(args[bigAt + 1]) : 2)
    }
  } finally {
    if (!args.includes('--keep')) rmSync(dir, { recursive: true, force: true })
    else console.log(`files kept in ${dir}`)
  }
}

// Only when run as a script: the config above is importable.
if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) await main()
