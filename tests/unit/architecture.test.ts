// The server's layering, read from the source tree: routes are thin and never reach the database,
// nothing under server/services or server/utils reaches for the scheduled jobs, and only the
// guard's module decides who may see what. DEVELOPERS.md states the same rules in words.
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { describe, expect, it } from 'vitest'

const root = join(__dirname, '..', '..')
const GUARD = 'server/utils/guard.ts'
/** Longest route file, in lines, unless DEVELOPERS.md names it as an exception with its reason. */
export const ROUTE_MAX_LINES = 20

function filesUnder(dir: string): string[] {
  const out: string[] = []
  for (const name of readdirSync(join(root, dir))) {
    const path = join(dir, name)
    if (statSync(join(root, path)).isDirectory()) out.push(...filesUnder(path))
    else if (/\.ts$/.test(name)) out.push(path.split('\\').join('/'))
  }
  return out
}
const read = (path: string) => readFileSync(join(root, path), 'utf8')
const lineCount = (text: string) => text.replace(/\n$/, '').split('\n').length

/** Imports and re-exports, static or dynamic: the module specifiers a file names. */
export function importedModules(source: string): string[] {
  const specs: string[] = []
  for (const m of source.matchAll(/\b(?:import|export)\s[^'"`;]*?\bfrom\s*['"]([^'"]+)['"]/g)) specs.push(m[1]!)
  for (const m of source.matchAll(/\bimport\s*\(?\s*['"]([^'"]+)['"]/g)) specs.push(m[1]!)
  return specs
}

/** True when a route reaches the database helper itself. */
export function usesDbHelper(source: string): boolean {
  return /\buseDb\b/.test(source) || importedModules(source).some((s) => /(^|\/)utils\/db$/.test(s))
}

export function importsTasks(source: string): boolean {
  return importedModules(source).some((s) => /(^|\/)tasks\//.test(s))
}

// A hand-written decision about roles or organisations: comparing a role with a role name,
// comparing organisation kinds or ids, or reading the actor's organisation at all.
const SCOPING_PATTERNS: RegExp[] = [
  /\brole\s*[!=]==?\s*['"`]/,
  /['"`]\s*[!=]==?\s*[\w.?]*\brole\b/,
  /\bactor\.role\s*[!=]==?|[!=]==?\s*actor\.role\b/,
  /\borganisationKind\s*[!=]==?|[!=]==?\s*[\w.?]*\borganisationKind\b/,
  /\.(organisationId|supplierId)\s*[!=]==?|[!=]==?\s*[\w.?]*\.(organisationId|supplierId)\b/,
  /\bactor\.(organisationId|supplierId|organisationKind)\b/,
]

/** The lines (1-based) of a file that decide scope by hand. */
export function scopingBranches(source: string): number[] {
  return source
    .split('\n')
    .map((line, i) => (SCOPING_PATTERNS.some((p) => p.test(line)) ? i + 1 : 0))
    .filter((n) => n > 0)
}

/** Route files DEVELOPERS.md allows to be longer, each named in backticks in its list. */
function routeLengthExceptions(): Set<string> {
  const doc = read('DEVELOPERS.md')
  const section = doc.split(/^#+ /m).find((s) => s.startsWith('Routes longer than'))
  return new Set([...(section ?? '').matchAll(/`(server\/api\/[^`]+\.ts)`/g)].map((m) => m[1]!))
}

describe('the detectors themselves', () => {
  it('see the database helper in a route', () => {
    expect(usesDbHelper("export default defineEventHandler(() => useDb()('engines'))")).toBe(true)
    expect(usesDbHelper("import { num } from '../../utils/db'")).toBe(true)
    expect(usesDbHelper("return callService(listEngines, actor)")).toBe(false)
  })

  it('see an import of the scheduled jobs, static, type-only or dynamic', () => {
    expect(importsTasks("import { runLifeCheck } from '../../tasks/life-check'")).toBe(true)
    expect(importsTasks("import type { Finding } from '../../tasks/life-check'")).toBe(true)
    expect(importsTasks("const m = await import('../../tasks/lock')")).toBe(true)
    expect(importsTasks("import { fleetLife } from '../services/life'")).toBe(false)
  })

  it('see role and organisation branches', () => {
    expect(scopingBranches("if (actor.role !== 'admin') qb.where('supplier_id', x)")).toEqual([1])
    expect(scopingBranches("const a = 1\nif (actor.organisationKind === 'supplier') go()")).toEqual([2])
    expect(scopingBranches("if (row.team_id === actor.organisationId) ok()")).toEqual([1])
    expect(scopingBranches("if (ev.supplierId !== x) notFound('Event')")).toEqual([1])
    expect(scopingBranches("qb.where('team_id', actor.organisationId)")).toEqual([1])
    expect(scopingBranches("if (input.role !== before.role) reason = 'role'")).toEqual([])
    expect(scopingBranches("scopeQuery(qb, actor, { supplier: 'e.supplier_id', team: 'e.team_id' })")).toEqual([])
  })
})

describe('server layers', () => {
  const routes = filesUnder('server/api')
  const serverFiles = filesUnder('server')

  it('finds the routes', () => {
    expect(routes.length).toBeGreaterThan(50)
  })

  it('no route uses the database helper: services own their database access', () => {
    expect(routes.filter((f) => usesDbHelper(read(f)))).toEqual([])
  })

  it(`no route is longer than ${ROUTE_MAX_LINES} lines unless DEVELOPERS.md names it with its reason`, () => {
    const allowed = routeLengthExceptions()
    const long = routes.filter((f) => lineCount(read(f)) > ROUTE_MAX_LINES && !allowed.has(f)).map((f) => `${f}: ${lineCount(read(f))} lines`)
    expect(long).toEqual([])
  })

  it('nothing under server/services or server/utils imports the scheduled jobs (tasks/)', () => {
    const offenders = serverFiles.filter((f) => /^server\/(services|utils)\//.test(f) && importsTasks(read(f)))
    expect(offenders).toEqual([])
  })

  it(`no role or organisation branch under server/ outside ${GUARD}`, () => {
    const offenders = serverFiles
      .filter((f) => f !== GUARD)
      .flatMap((f) => scopingBranches(read(f)).map((line) => `${relative(root, join(root, f))}:${line}`))
    expect(offenders).toEqual([])
  })
})
