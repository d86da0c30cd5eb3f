// `npm run bench:cluster` (scripts/bench-cluster.sh has started the Galera cluster with the demo
// data): the mixed read load of bench:load — board, engine pages and session lists as four users —
// against two instances on the cluster and the S3 store, 25 connections each, with node 1 (the
// writer) killed halfway. Every answer is timed and filed before, during or after the failover:
// "during" runs from the kill until both instances have moved to the next node and the last
// refused request is answered. Target: the only errors are 503s during the failover.
import autocannon from 'autocannon'
import { APP_PORTS, galera, signIn, startApp, startStore } from '../tests/cluster/cluster'

const DURATION = Number(process.env.BENCH_SECONDS ?? 60)
const CONNECTIONS_EACH = 25
const READERS = ['engineer@keelbrook.test', 'manager@marlowe.test', 'manager@tidewater.test', 'race@redfern.test']

interface Answer { at: number; status: number; ms: number }

function percentile(sorted: number[], p: number) {
  if (!sorted.length) return NaN
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)]!
}

async function mixFor(base: string): Promise<autocannon.Request[]> {
  const requests: autocannon.Request[] = []
  for (const email of READERS) {
    const headers = { cookie: await signIn(base, email), 'accept-encoding': 'gzip' }
    const engines = (await (await fetch(`${base}/api/engines`, { headers })).json()) as { id: number }[]
    requests.push({ method: 'GET', path: '/api/board', headers }, { method: 'GET', path: '/api/board', headers })
    for (const e of engines) requests.push({ method: 'GET', path: `/api/engines/${e.id}`, headers }, { method: 'GET', path: `/api/engines/${e.id}/sessions`, headers })
  }
  return requests
}

function load(base: string, requests: autocannon.Request[], answers: Answer[]) {
  return new Promise<autocannon.Result>((resolve, reject) => {
    const instance = autocannon({ url: base, connections: CONNECTIONS_EACH, duration: DURATION, requests }, (err, result) => (err ? reject(err) : resolve(result)))
    instance.on('response', (_client, status, _bytes, ms) => answers.push({ at: Date.now(), status, ms }))
    instance.on('reqError', () => answers.push({ at: Date.now(), status: 0, ms: 0 }))
  })
}

function phase(name: string, list: Answer[], seconds: number) {
  const ok = list.filter((a) => a.status >= 200 && a.status < 300)
  const ms = list.map((a) => a.ms).sort((x, y) => x - y)
  const refused = list.filter((a) => a.status === 503).length
  const other = list.length - ok.length - refused
  const f = (v: number) => String(Math.round(v)).padStart(5)
  console.log(`${name.padEnd(8)} ${seconds.toFixed(1).padStart(5)} s  answers ${String(list.length).padStart(6)}  req/s ${f(list.length / Math.max(seconds, 0.001))}  p50 ${f(percentile(ms, 50))} ms  p97.5 ${f(percentile(ms, 97.5))} ms  503 ${refused}  other errors ${other}`)
  return { refused, other }
}

async function main() {
  const store = await startStore()
  const [a, b] = await Promise.all([startApp(APP_PORTS[0]), startApp(APP_PORTS[1])])
  try {
    const [mixA, mixB] = await Promise.all([mixFor(a.base), mixFor(b.base)])
    console.log(`two instances (${a.base}, ${b.base}), ${CONNECTIONS_EACH} connections each, ${DURATION} s; node 1 killed at ${DURATION / 2} s`)
    const answers: Answer[] = []
    const started = Date.now()
    const runs = Promise.all([load(a.base, mixA, answers), load(b.base, mixB, answers)])
    await new Promise((r) => setTimeout(r, (DURATION / 2) * 1000))
    const killedAt = Date.now()
    galera('kill', 1)
    await runs
    const ended = Date.now()
    // An answer's time is when it arrived. The failover runs from the kill until both instances
    // have moved to the next node and the last refused request (if any) has been answered.
    const failed = answers.filter((x) => x.at >= killedAt && (x.status < 200 || x.status >= 300))
    const switched = Math.max(...[...a.switches, ...b.switches].filter((t) => t >= killedAt), killedAt)
    const endOfFailover = Math.max(switched, ...failed.map((x) => x.at))
    const before = answers.filter((x) => x.at < killedAt)
    const during = answers.filter((x) => x.at >= killedAt && x.at <= endOfFailover)
    const after = answers.filter((x) => x.at > endOfFailover)
    console.log(`failover: both instances on the next node ${((switched - killedAt) / 1000).toFixed(2)} s after the kill; last refused request answered ${failed.length ? `${((Math.max(...failed.map((x) => x.at)) - killedAt) / 1000).toFixed(2)} s` : 'never (none refused)'} after it`)
    const p = [phase('before', before, (killedAt - started) / 1000), phase('during', during, (endOfFailover - killedAt) / 1000), phase('after', after, (ended - endOfFailover) / 1000)]
    const beforeErrors = p[0]!.refused + p[0]!.other
    const met = beforeErrors === 0 && p[1]!.other === 0 && p[2]!.refused + p[2]!.other === 0
    console.log(`target: errors only 503s during the failover -> ${met ? 'met' : 'NOT met'}`)
    for (const line of [...a.log, ...b.log].join('').split('\n').filter((l) => l.includes('database writer'))) console.log(`  ${line.trim()}`)
  } finally {
    await Promise.all([a.stop(), b.stop()])
    await store.stop()
  }
}

await main()
