// `npm run bench:pages`: how the built app opens on a slow link. Uses the existing build (builds
// nothing), resets the test database to the demo scenario and starts the built server on it, then
// opens pages in Debian's Chromium (playwright-core) with CDP network emulation of 1.6 Mbps down,
// 750 kbps up and 150 ms latency, and a 4x CPU slowdown. Each page is opened cold (new browser
// context, empty cache); the median of --runs is reported (default 3). Lighthouse 12.2 (its
// mobile preset, simulated throttling) scores the sign-in page. Targets: at most 200 KB of
// compressed JavaScript before the sign-in page and the board are interactive, the board
// interactive within 3 s after signing in, Lighthouse performance >= 0.9 on the sign-in page.
// Uses the test instance: do not run it beside `npm test`.
import { existsSync, writeFileSync } from 'node:fs'
import { cpus, loadavg } from 'node:os'
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'
import { launch as launchChrome } from 'chrome-launcher'
import lighthouse from 'lighthouse'
import { sh, signIn, startServer, startTestDb } from './server'
import { DEMO_PASSWORD } from '../db/seeds/demo'

const PORT = Number(process.env.BENCH_PORT ?? 3397)
const RUNS = Number(argValue('--runs') ?? 3)
const LIGHTHOUSE_RUNS = Number(argValue('--lighthouse-runs') ?? 3)
const REPORT = argValue('--lighthouse-report') // where to keep the last Lighthouse report (JSON), if anywhere
const ONLY_LIGHTHOUSE = process.argv.includes('--lighthouse-only')
const TRACE = process.argv.includes('--trace') // list the requests made while signing in to the board
const CHROMIUM = process.env.CHROMIUM_PATH || '/usr/bin/chromium'
const USER = 'engineer@keelbrook.test' // the supplier engineer: the whole fleet on the board
const ENGINE_SERIAL = 'KT4-2201' // a demo engine with sessions, over-revs and a teardown: every chart drawn
const BUDGET_JS = 200_000
const BOARD_AFTER_SIGN_IN_TARGET_MS = 3000
const LIGHTHOUSE_TARGET = 0.9

// CDP network emulation takes bytes per second.
const NETWORK = { offline: false, latency: 150, downloadThroughput: 1_600_000 / 8, uploadThroughput: 750_000 / 8 }
const CPU_SLOWDOWN = 4
const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE localhost, EXCLUDE 127.0.0.1']

function argValue(name: string): string | undefined {
  const i = process.argv.indexOf(name)
  return i >= 0 ? process.argv[i + 1] : undefined
}

interface Transfer { url: string; type: string; bytes: number; startedMs: number; finishedMs: number }
interface Measure { jsBeforeInteractive: number; jsTotal: number; totalBytes: number; requests: number; fcpMs: number; loadMs: number; interactiveMs: number; chartsMs?: number }

/** Throttles a page and records every response's bytes on the wire (compressed, headers included). */
async function instrument(page: Page) {
  const cdp = await page.context().newCDPSession(page)
  await cdp.send('Network.enable')
  await cdp.send('Network.emulateNetworkConditions', NETWORK)
  await cdp.send('Emulation.setCPUThrottlingRate', { rate: CPU_SLOWDOWN })
  const started = new Map<string, { url: string; type: string; at: number }>()
  const transfers: Transfer[] = []
  let origin = 0 // CDP's monotonic clock when the document was requested, in seconds
  cdp.on('Network.requestWillBeSent', (e) => {
    if (e.type === 'Document' && !origin) origin = e.timestamp
    started.set(e.requestId, { url: e.request.url, type: e.type ?? 'Other', at: e.timestamp })
  })
  cdp.on('Network.loadingFinished', (e) => {
    const s = started.get(e.requestId)
    if (s) transfers.push({ url: s.url, type: s.type, bytes: e.encodedDataLength, startedMs: (s.at - origin) * 1000, finishedMs: (e.timestamp - origin) * 1000 })
  })
  return { transfers }
}

/** Resolves with the page's clock (ms since navigation) once Nuxt has hydrated the page. */
function hydrated(page: Page): Promise<number> {
  return page
    .waitForFunction(() => {
      const app = (document.getElementById('__nuxt') as any)?.__vue_app__
      return app && app.config.globalProperties.$nuxt?.isHydrating === false ? performance.now() : false
    }, undefined, { polling: 'raf', timeout: 120_000 })
    .then((h) => h.jsonValue() as Promise<number>)
}

async function timings(page: Page) {
  await page.waitForLoadState('load')
  return page.evaluate(() => {
    const nav = performance.getEntriesByType('navigation')[0] as PerformanceNavigationTiming | undefined
    const fcp = performance.getEntriesByName('first-contentful-paint')[0]
    return { loadMs: nav?.loadEventEnd ?? NaN, fcpMs: fcp?.startTime ?? NaN }
  })
}

function summarise(transfers: Transfer[], interactiveMs: number) {
  const js = transfers.filter((t) => t.type === 'Script')
  return {
    jsBeforeInteractive: js.filter((t) => t.finishedMs <= interactiveMs).reduce((s, t) => s + t.bytes, 0),
    jsTotal: js.reduce((s, t) => s + t.bytes, 0),
    totalBytes: transfers.reduce((s, t) => s + t.bytes, 0),
    requests: transfers.length,
  }
}

/** One cold visit: a new context (empty cache), throttled, until the network is quiet after load. */
async function visit(browser: Browser, base: string, path: string, cookie: string | null, opts: { charts?: boolean } = {}): Promise<Measure> {
  const context = await browser.newContext({ baseURL: base, viewport: { width: 1366, height: 900 } })
  if (cookie) await addCookie(context, base, cookie)
  const page = await context.newPage()
  const net = await instrument(page)
  const interactive = hydrated(page)
  await page.goto(path, { waitUntil: 'commit' })
  const interactiveMs = await interactive
  const { loadMs, fcpMs } = await timings(page)
  let chartsMs: number | undefined
  if (opts.charts) {
    await page.locator('svg.apexcharts-svg').first().waitFor({ timeout: 120_000 })
    chartsMs = await page.evaluate(() => performance.now())
  }
  await page.waitForLoadState('networkidle')
  const m = { ...summarise(net.transfers, interactiveMs), fcpMs, loadMs, interactiveMs, chartsMs }
  await context.close()
  return m
}

/** The sign-in page opened cold, then signing in: until the board's rows are drawn. */
async function signInToBoard(browser: Browser, base: string): Promise<{ signIn: Measure; board: Measure }> {
  const context = await browser.newContext({ baseURL: base, viewport: { width: 1366, height: 900 } })
  const page = await context.newPage()
  const net = await instrument(page)
  const interactive = hydrated(page)
  await page.goto('/login', { waitUntil: 'commit' })
  const interactiveMs = await interactive
  const { loadMs, fcpMs } = await timings(page)
  await page.waitForLoadState('networkidle')
  const signIn = { ...summarise(net.transfers, interactiveMs), fcpMs, loadMs, interactiveMs }

  await page.fill('#email', USER)
  await page.fill('#password', DEMO_PASSWORD)
  const before = net.transfers.length
  // from the moment the form is sent, on the page's clock (not the driver's round trips before the click)
  await page.evaluate(() => document.querySelector('form')!.addEventListener('submit', () => ((window as any).__sentAt = performance.now()), { capture: true }))
  await page.click('button[type=submit]')
  const shownAt = await page
    .waitForFunction(() => location.pathname === '/' && document.querySelector('[data-test=board-row]') && !document.querySelector('[aria-busy=true]') ? performance.now() : false, undefined, { polling: 'raf', timeout: 120_000 })
    .then((h) => h.jsonValue() as Promise<number>)
  await page.waitForLoadState('networkidle')
  const clickedAt = await page.evaluate(() => (window as any).__sentAt as number)
  const after = net.transfers.slice(before).map((t) => ({ ...t, startedMs: t.startedMs - clickedAt, finishedMs: t.finishedMs - clickedAt }))
  if (TRACE) for (const t of after) console.log(`  ${sec(t.startedMs)} – ${sec(t.finishedMs)}  ${kb(t.bytes).padStart(9)}  ${t.type.padEnd(10)} ${t.url.replace(base, '')}`)
  const board = { ...summarise(after, shownAt - clickedAt), fcpMs: NaN, loadMs: NaN, interactiveMs: shownAt - clickedAt }
  await context.close()
  return { signIn, board }
}

async function addCookie(context: BrowserContext, base: string, cookie: string) {
  const [name, value] = cookie.split(/=(.*)/s) as [string, string]
  await context.addCookies([{ name, value, url: base }])
}

function median(values: number[]): number {
  const v = values.filter((x) => Number.isFinite(x)).sort((a, b) => a - b)
  if (!v.length) return NaN
  const mid = Math.floor(v.length / 2)
  return v.length % 2 ? v[mid]! : (v[mid - 1]! + v[mid]!) / 2
}
function medianOf(list: Measure[]): Measure {
  const keys = Object.keys(list[0]!) as (keyof Measure)[]
  return Object.fromEntries(keys.map((k) => [k, median(list.map((m) => m[k] ?? NaN))])) as unknown as Measure
}

const kb = (b: number) => (Number.isFinite(b) ? `${(b / 1000).toFixed(1)} KB` : '—')
const sec = (ms: number | undefined) => (ms !== undefined && Number.isFinite(ms) ? `${(ms / 1000).toFixed(2)} s` : '—')

async function lighthouseScores(url: string) {
  const chrome = await launchChrome({ chromePath: CHROMIUM, chromeFlags: ['--headless=new', ...CHROMIUM_ARGS] })
  try {
    const runs = []
    for (let i = 0; i < LIGHTHOUSE_RUNS; i++) {
      // the default configuration: mobile, simulated slow 4G and 4x CPU
      const result = await lighthouse(url, { port: chrome.port, output: 'json', logLevel: 'error', onlyCategories: ['performance', 'accessibility', 'best-practices'] })
      const lhr = result!.lhr
      if (REPORT) writeFileSync(REPORT, JSON.stringify(lhr))
      const audit = (id: string) => lhr.audits[id]?.numericValue ?? NaN
      runs.push({
        performance: lhr.categories.performance?.score ?? NaN,
        accessibility: lhr.categories.accessibility?.score ?? NaN,
        bestPractices: lhr.categories['best-practices']?.score ?? NaN,
        fcp: audit('first-contentful-paint'),
        lcp: audit('largest-contentful-paint'),
        tbt: audit('total-blocking-time'),
        unusedJs: lhr.audits['unused-javascript']?.details && 'overallSavingsBytes' in lhr.audits['unused-javascript'].details ? Number(lhr.audits['unused-javascript'].details.overallSavingsBytes) : 0,
      })
      console.log(`  lighthouse run ${i + 1}: performance ${runs.at(-1)!.performance}`)
    }
    return runs
  } finally {
    chrome.kill()
  }
}

async function measurePages(browser: Browser, base: string, cookie: string, engineId: number): Promise<Record<string, Measure>> {
  const rows: Record<string, Measure[]> = { 'sign-in': [], 'board after sign-in': [], board: [], engine: [], import: [] }
  for (let run = 1; run <= RUNS; run++) {
    const flow = await signInToBoard(browser, base)
    rows['sign-in']!.push(flow.signIn)
    rows['board after sign-in']!.push(flow.board)
    rows.board!.push(await visit(browser, base, '/', cookie))
    rows.engine!.push(await visit(browser, base, `/engines/${engineId}`, cookie, { charts: true }))
    rows.import!.push(await visit(browser, base, '/sessions/import', cookie))
    console.log(`run ${run} of ${RUNS}: sign-in interactive ${sec(flow.signIn.interactiveMs)}, board after sign-in ${sec(flow.board.interactiveMs)}`)
  }
  console.log(`\nThrottled: ${(NETWORK.downloadThroughput * 8) / 1e6} Mbps down, ${(NETWORK.uploadThroughput * 8) / 1e3} kbps up, ${NETWORK.latency} ms latency, ${CPU_SLOWDOWN}x CPU; cold cache; median of ${RUNS} runs; bytes as sent (compressed, headers included)`)
  console.log('| page | JS before interactive | JS in all | all bytes | requests | first paint | load | interactive | charts drawn |')
  console.log('|---|---|---|---|---|---|---|---|---|')
  const names: Record<string, string> = { 'sign-in': 'sign-in (`/login`)', 'board after sign-in': 'board, signing in from the sign-in page', board: 'board (`/`), opened signed in', engine: `engine page (${ENGINE_SERIAL})`, import: 'logger import (`/sessions/import`)' }
  const med: Record<string, Measure> = {}
  for (const [key, list] of Object.entries(rows)) {
    const m = (med[key] = medianOf(list))
    console.log(`| ${names[key]} | ${kb(m.jsBeforeInteractive)} | ${kb(m.jsTotal)} | ${kb(m.totalBytes)} | ${m.requests} | ${sec(m.fcpMs)} | ${sec(m.loadMs)} | ${sec(m.interactiveMs)} | ${sec(m.chartsMs)} |`)
  }
  return med
}

async function main() {
  if (!existsSync('.output/server/index.mjs')) throw new Error('No build found: run `npm run build` (or `npm test`) first; this bench builds nothing')
  console.log(`load average at the start: ${loadavg().map((l) => l.toFixed(2)).join(' ')} (${cpus().length} cores)`)
  const url = startTestDb()
  console.log('resetting the test database to the demo scenario')
  sh('npx', ['tsx', 'db/cli.ts', 'reset'], { NUXT_DATABASE_URL: url })
  const server = await startServer(url, PORT)
  const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS })
  try {
    const base = server.base
    const cookie = await signIn(base, USER)
    const engines = (await (await fetch(`${base}/api/engines`, { headers: { cookie } })).json()) as { id: number; serial: string }[]
    const engine = engines.find((e) => e.serial === ENGINE_SERIAL)
    if (!engine) throw new Error(`demo engine ${ENGINE_SERIAL} not found`)
    // one unthrottled pass so the server's caches (fleet life) are warm, as on a running instance
    for (const path of ['/login', '/', `/engines/${engine.id}`, '/sessions/import', '/api/board']) await fetch(`${base}${path}`, { headers: { cookie } })

    const med = ONLY_LIGHTHOUSE ? null : await measurePages(browser, base, cookie, engine.id)

    console.log(`\nLighthouse 12.2 on the sign-in page (mobile preset, simulated throttling), ${LIGHTHOUSE_RUNS} runs:`)
    const lh = await lighthouseScores(`${base}/login`)
    const perf = median(lh.map((r) => r.performance))
    console.log(`performance ${perf} (runs: ${lh.map((r) => r.performance).join(', ')}); accessibility ${median(lh.map((r) => r.accessibility))}; best practices ${median(lh.map((r) => r.bestPractices))}`)
    console.log(`first contentful paint ${sec(median(lh.map((r) => r.fcp)))}, largest contentful paint ${sec(median(lh.map((r) => r.lcp)))}, total blocking time ${Math.round(median(lh.map((r) => r.tbt)))} ms, unused JavaScript ${kb(median(lh.map((r) => r.unusedJs)))}`)

    console.log('\nTargets:')
    const verdict = (ok: boolean) => (ok ? 'met' : 'MISSED')
    if (med) {
      const signInJs = med['sign-in']!.jsBeforeInteractive
      const boardJs = med.board!.jsBeforeInteractive
      const boardAfter = med['board after sign-in']!
      console.log(`  sign-in: ${kb(signInJs)} of JS before interactive (budget ${kb(BUDGET_JS)}): ${verdict(signInJs <= BUDGET_JS)}`)
      console.log(`  board: ${kb(boardJs)} of JS before interactive when opened signed in; ${kb(signInJs + boardAfter.jsBeforeInteractive)} from the sign-in page on (budget ${kb(BUDGET_JS)}): ${verdict(boardJs <= BUDGET_JS && signInJs + boardAfter.jsBeforeInteractive <= BUDGET_JS)}`)
      console.log(`  board after sign-in: ${sec(boardAfter.interactiveMs)} (target under ${sec(BOARD_AFTER_SIGN_IN_TARGET_MS)}): ${verdict(boardAfter.interactiveMs < BOARD_AFTER_SIGN_IN_TARGET_MS)}`)
    }
    console.log(`  Lighthouse performance of the sign-in page: ${perf} (target ${LIGHTHOUSE_TARGET}): ${verdict(perf >= LIGHTHOUSE_TARGET)}`)
    console.log(`load average at the end: ${loadavg().map((l) => l.toFixed(2)).join(' ')}`)
  } finally {
    await browser.close()
    await server.stop()
  }
}

main().catch((e) => {
  console.error(e)
  process.exit(1)
})
