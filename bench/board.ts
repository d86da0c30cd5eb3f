// `npm run bench:board`: a large fleet (500 engines, 40 parts each, 200 sessions per engine) in the
// test database, the built server on loopback, and autocannon at 50 connections against the board API,
// beside a trivial route measured in the same run. Loopback only; bounded in time.
import autocannon from 'autocannon'
import { prepareFleet } from './fleet'
import { signIn, startServer, startTestDb } from './server'

const PORT = Number(process.env.BENCH_PORT ?? 3395)
const DURATION = Number(process.env.BENCH_SECONDS ?? 20)
const CONNECTIONS = 50

function run(url: string, headers: Record<string, string>) {
  return new Promise<autocannon.Result>((resolve, reject) => {
    autocannon({ url, connections: CONNECTIONS, duration: DURATION, headers }, (err, result) => (err ? reject(err) : resolve(result)))
  })
}

function line(name: string, r: autocannon.Result) {
  const lat = r.latency as any
  return `${name.padEnd(14)} req/s ${r.requests.average.toFixed(0).padStart(6)}  p50 ${String(lat.p50).padStart(5)} ms  p90 ${String(lat.p90).padStart(5)} ms  p97.5 ${String(lat.p97_5).padStart(5)} ms  p99 ${String(lat.p99).padStart(5)} ms  errors ${r.errors + r.non2xx}`
}

async function main() {
  const url = startTestDb()
  await prepareFleet(url)
  const server = await startServer(url, PORT)
  try {
    const base = server.base
    const cookie = await signIn(base, 'engineer@keelbrook.test')
    const c0 = Date.now()
    const first = await fetch(`${base}/api/board`, { headers: { cookie } })
    const body = await first.text()
    console.log(`first board answer (computes the fleet's life): ${Date.now() - c0} ms, ${JSON.parse(body).engines.length} engines, ${(body.length / 1024).toFixed(0)} KiB`)
    const trivial = await run(`${base}/api/health`, {})
    // Browsers ask for gzip; so does the benchmark.
    const board = await run(`${base}/api/board`, { cookie, 'accept-encoding': 'gzip' })
    // autocannon reports p90 and p97.5; p95 lies between them, so p97.5 is the bound checked.
    const p95 = (board.latency as any).p97_5
    console.log(`\n${CONNECTIONS} connections, ${DURATION} s each, loopback:`)
    console.log(line('trivial route', trivial))
    console.log(line('board', board))
    console.log(`\ntarget: board p95 (bounded by p97.5) < 150 ms and no errors -> ${p95 < 150 && board.errors + board.non2xx === 0 ? 'met' : 'NOT met'}`)
  } finally {
    await server.stop()
  }
}

await main()
