// The page-weight budget, read from the build itself: the client manifest Nuxt writes at build time
// names every chunk and what it imports statically, so what a page must load before it can run is
// the entry plus its layout, middleware and page chunk with their static imports. The sizes are of
// the files in the built output, gzip-compressed as the server sends them. Speed itself is measured
// by `npm run bench:pages`, never here.
import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { pathToFileURL } from 'node:url'
import { gzipSync } from 'node:zlib'
import { beforeAll, describe, expect, it } from 'vitest'
import { BASE } from './helpers'

const BUDGET = 200_000 // bytes of compressed JavaScript before the sign-in page or the board runs
const MANIFEST = '.nuxt/dist/server/client.manifest.mjs'
const ASSETS = '.output/public/_nuxt'
// Strings each library carries in its code and nothing else here does: a class name the charting
// library gives every chart it draws, and an error code of papaparse's delimiter guessing.
const CHART_MARK = 'apexcharts-canvas'
const PAPA_MARK = 'UndetectableDelimiter'
const LIBRARIES_ON_DEMAND = /apexcharts|papaparse/

interface Chunk { file?: string; src?: string; name?: string; isEntry?: boolean; imports?: string[]; dynamicImports?: string[]; resourceType?: string; preload?: boolean }
let manifest: Record<string, Chunk>
let entryKey: string

beforeAll(async () => {
  if (!existsSync(MANIFEST)) throw new Error('No build manifest: run the suite with `npm test`, which builds first')
  manifest = (await import(pathToFileURL(join(process.cwd(), MANIFEST)).href)).default
  entryKey = Object.keys(manifest).find((k) => manifest[k]!.isEntry)!
})

/** The chunks a page loads before it runs: these, and what they import statically, transitively. */
function staticClosure(keys: string[]): string[] {
  const seen = new Set<string>()
  const visit = (k: string) => {
    if (seen.has(k)) return
    if (!manifest[k]) throw new Error(`${k} is not in the build manifest`)
    seen.add(k)
    for (const i of manifest[k]!.imports ?? []) visit(i)
  }
  keys.forEach(visit)
  return [...seen]
}

/** A chunk named after either library (shared chunks are keyed by hash; their name tells). */
const isLibrary = (k: string) => LIBRARIES_ON_DEMAND.test(k) || LIBRARIES_ON_DEMAND.test(manifest[k]!.name ?? '')
const code = (k: string) => readFileSync(join(ASSETS, manifest[k]!.file!), 'utf8')
const gzipped = (k: string) => gzipSync(readFileSync(join(ASSETS, manifest[k]!.file!))).length
/** Names the chunks among these that are, or carry, either library. */
const withLibraries = (keys: string[]) => keys.filter((k) => isLibrary(k) || code(k).includes(CHART_MARK) || code(k).includes(PAPA_MARK)).map((k) => manifest[k]!.file)
const jsBytes = (keys: string[]) => keys.filter((k) => manifest[k]!.file?.endsWith('.js')).reduce((sum, k) => sum + gzipped(k), 0)

describe('the page-weight budget, from the build manifest', () => {
  it('keeps the charting library out of the entry chunk and in a chunk of its own', () => {
    const chartChunk = Object.keys(manifest).find((k) => /vue3-apexcharts\/dist\/vue3-apexcharts\.js$/.test(k))
    expect(chartChunk, 'the chart component is built as a chunk loaded on demand').toBeDefined()
    // the mark is what the library carries: the check below would find it if the library moved back
    expect(code(chartChunk!)).toContain(CHART_MARK)
    expect(code(entryKey)).not.toContain(CHART_MARK)
    expect(withLibraries(staticClosure([entryKey]))).toEqual([])
  })

  it('loads papaparse only from the lab-file page, once a file is chosen', () => {
    const papa = Object.keys(manifest).filter((k) => /papaparse/.test(k + (manifest[k]!.name ?? '')))
    expect(papa.length).toBeGreaterThan(0)
    for (const k of papa) expect(code(k)).toContain(PAPA_MARK)
    const importers = Object.keys(manifest).filter((k) => (manifest[k]!.imports ?? []).some((i) => papa.includes(i)))
    expect(importers).toEqual([])
    const loaders = Object.keys(manifest).filter((k) => (manifest[k]!.dynamicImports ?? []).some((i) => papa.includes(i)))
    expect(loaders).toEqual(['pages/oil/import.vue'])
  })

  it('holds the sign-in page within 200 KB of compressed JavaScript, without either library', () => {
    const chunks = staticClosure([entryKey, 'layouts/bare.vue', 'pages/login.vue'])
    expect(withLibraries(chunks)).toEqual([])
    const bytes = jsBytes(chunks)
    console.log(`sign-in page: ${chunks.length} chunks, ${(bytes / 1000).toFixed(1)} KB of compressed JavaScript (budget ${BUDGET / 1000} KB)`)
    expect(bytes).toBeLessThanOrEqual(BUDGET)
  })

  it('holds the board within 200 KB of compressed JavaScript, without either library', () => {
    const chunks = staticClosure([entryKey, 'layouts/default.vue', 'middleware/auth.ts', 'pages/index.vue'])
    expect(withLibraries(chunks)).toEqual([])
    const bytes = jsBytes(chunks)
    console.log(`board: ${chunks.length} chunks, ${(bytes / 1000).toFixed(1)} KB of compressed JavaScript (budget ${BUDGET / 1000} KB)`)
    expect(bytes).toBeLessThanOrEqual(BUDGET)
  })

  it('builds the chart pages with the chart component, whose chunk loads the library on demand', () => {
    for (const page of ['pages/engines/[id].vue', 'pages/parts/[id].vue', 'pages/sessions/[id].vue', 'pages/oil/[engineId].vue']) {
      const closure = staticClosure([page])
      expect(withLibraries(closure), page).toEqual([])
      expect(closure.some((k) => (manifest[k]!.dynamicImports ?? []).some((d) => /vue3-apexcharts/.test(d))), page).toBe(true)
    }
  })
})

describe('fonts and compression as served', () => {
  it('preloads the Latin woff2 files of the three weights in use, which swap in when they arrive', async () => {
    const html = await (await fetch(`${BASE}/login`)).text()
    const preloads = [...html.matchAll(/<link rel="preload" as="font" type="font\/woff2" crossorigin href="([^"]+)">/g)].map((m) => m[1]!)
    expect(preloads.map((p) => p.replace(/^.*\/(barlow-latin-\d00-normal)\..*$/, '$1')).sort()).toEqual(['barlow-latin-400-normal', 'barlow-latin-500-normal', 'barlow-latin-600-normal'])
    const css = await (await fetch(`${BASE}${html.match(/<link rel="stylesheet" href="([^"]+entry[^"]+\.css)"/)![1]}`)).text()
    const faces = css.match(/@font-face\{[^}]*\}/g) ?? []
    expect(faces).toHaveLength(3)
    for (const face of faces) {
      expect(face).toContain('font-display:swap')
      expect(face).toMatch(/barlow-latin-\d00-normal/)
    }
  })

  it('sends pages and scripts gzip-compressed to a browser that accepts it', async () => {
    const page = await fetch(`${BASE}/login`, { headers: { 'accept-encoding': 'gzip' } })
    expect(page.headers.get('content-encoding')).toBe('gzip')
    const html = await page.text()
    expect(html).toContain('<div id="__nuxt">')
    const script = await fetch(`${BASE}/_nuxt/${manifest[entryKey]!.file}`, { headers: { 'accept-encoding': 'gzip' } })
    expect(script.headers.get('content-encoding')).toBe('gzip')
    expect(await script.text()).toBe(code(entryKey))
  })
})
