// The client's layers, read from the source tree: pages and components never call the API themselves
// (stores/ and composables/ do), pages stay short, and no client file passes 400 lines.
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { describe, expect, it } from 'vitest'

const root = join(__dirname, '..', '..')
const PAGE_MAX_LINES = 200
const FILE_MAX_LINES = 400

function filesUnder(dir: string, ext: RegExp): string[] {
  const abs = join(root, dir)
  if (!existsSync(abs)) return []
  return readdirSync(abs).flatMap((name) => {
    const path = join(abs, name)
    const rel = relative(root, path)
    return statSync(path).isDirectory() ? filesUnder(rel, ext) : ext.test(name) ? [rel] : []
  })
}
// `$fetch(` and `$fetch<T>(` alike
const callsFetch = (rel: string) => /\$fetch\s*[<(]/.test(readFileSync(join(root, rel), 'utf8'))
const lineCount = (rel: string) => readFileSync(join(root, rel), 'utf8').replace(/\n$/, '').split('\n').length

/** Pages DEVELOPERS.md allows to be longer, each named on its "Longer pages:" line. */
function pageLengthExceptions(): string[] {
  const guide = readFileSync(join(root, 'DEVELOPERS.md'), 'utf8')
  const line = guide.split('\n').find((l) => l.includes('Longer pages:')) ?? ''
  return [...line.matchAll(/`(pages\/[^`]+\.vue)`/g)].map((m) => m[1]!)
}

const pages = filesUnder('pages', /\.vue$/)
// Everything that runs in the browser apart from the data layer itself.
const viewFiles = [...pages, ...filesUnder('components', /\.vue$/), ...filesUnder('layouts', /\.vue$/), ...filesUnder('middleware', /\.ts$/), ...filesUnder('plugins', /\.ts$/), 'app.vue', 'error.vue']
const clientFiles = [...viewFiles, ...filesUnder('stores', /\.ts$/), ...filesUnder('composables', /\.ts$/), ...filesUnder('utils', /\.ts$/)]

describe('client layers', () => {
  it('finds the pages it checks', () => {
    expect(pages.length).toBeGreaterThan(20)
    expect(pages).toContain('pages/index.vue')
  })

  it('no page calls $fetch: reads and writes go through stores/ and composables/', () => {
    const offenders = pages.filter(callsFetch)
    expect(offenders).toEqual([])
  })

  it('no page or component reads with useFetch or useAsyncData: composables hold the keys', () => {
    const offenders = viewFiles.filter((rel) => existsSync(join(root, rel)) && /\buse(Lazy)?(Fetch|AsyncData)\(/.test(readFileSync(join(root, rel), 'utf8')))
    expect(offenders).toEqual([])
  })

  it('no component, layout, middleware or plugin calls $fetch either', () => {
    const offenders = viewFiles.filter((rel) => !rel.startsWith('pages/') && existsSync(join(root, rel)) && callsFetch(rel))
    expect(offenders).toEqual([])
  })

  it(`pages stay within ${PAGE_MAX_LINES} lines unless DEVELOPERS.md lists them`, () => {
    const allowed = pageLengthExceptions()
    const long = pages.filter((rel) => lineCount(rel) > PAGE_MAX_LINES && !allowed.includes(rel)).map((rel) => `${rel}: ${lineCount(rel)} lines`)
    expect(long).toEqual([])
  })

  it(`no client file is over ${FILE_MAX_LINES} lines`, () => {
    const long = clientFiles.filter((rel) => existsSync(join(root, rel)) && lineCount(rel) > FILE_MAX_LINES).map((rel) => `${rel}: ${lineCount(rel)} lines`)
    expect(long).toEqual([])
  })
})
