// Property-based tests over every zod schema the API validates with: each module of
// shared/schemas/, the oil sample schema and the logger mapping are imported and every
// exported zod schema is found by inspection, so a schema added later is covered without
// editing this file. For arbitrary JSON (and for objects built from the schema's own keys with
// arbitrary values, which get past the first type check), safeParse never throws and every
// failure carries at least one issue with a message, which the API turns into its 400 answer.
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { schemaModules } from './schema-modules'
import { z } from 'zod'
import { zodMessage } from '../../server/utils/errors'

const RUNS = Number(process.env.FUZZ_RUNS ?? 200)
const modules = await schemaModules()

function isZod(v: unknown): v is z.ZodType {
  return v instanceof z.ZodType || (typeof v === 'object' && v !== null && '_zod' in v && typeof (v as z.ZodType).safeParse === 'function')
}

/** Schemas made by a factory (their rules depend on a context the caller passes). */
const FACTORIES: Record<string, (f: (...a: any[]) => unknown) => unknown> = {
  oilSampleSchema: (f) => f({ now: new Date('2026-06-01T12:00:00Z'), builtAt: new Date('2026-01-10T00:00:00Z') }),
}

const schemas: [string, z.ZodType][] = []
const unlistedFactories: string[] = []
for (const [file, mod] of Object.entries(modules)) {
  for (const [name, value] of Object.entries(mod)) {
    if (isZod(value)) schemas.push([`${file} ${name}`, value])
    else if (typeof value === 'function' && /Schema$/.test(name)) {
      const make = FACTORIES[name]
      if (!make) unlistedFactories.push(`${file} ${name}`)
      else {
        const made = make(value as (...a: any[]) => unknown)
        if (isZod(made)) schemas.push([`${file} ${name}()`, made])
      }
    }
  }
}

/** The object keys a schema reads, looking through optional/default/pipe/effects wrappers. */
function keysOf(schema: unknown, depth = 0): string[] {
  if (!schema || depth > 6) return []
  const s = schema as { shape?: Record<string, unknown>; _zod?: { def?: Record<string, any> } }
  if (s.shape && typeof s.shape === 'object') return Object.keys(s.shape)
  const def = s._zod?.def
  if (!def) return []
  for (const inner of [def.innerType, def.in, def.out, def.schema, ...(def.options ?? [])]) {
    const k = keysOf(inner, depth + 1)
    if (k.length) return k
  }
  return []
}

const hostile = fc.oneof(
  fc.jsonValue(),
  fc.constantFrom('', ' ', '\u0000', 'null', '[]', '{}', '1e309', '-0', 'NaN', '2026-02-30T25:61:00Z', '__proto__', 'constructor', '\ud800', '\u202e'.repeat(3), 'x'.repeat(100_000)),
  fc.double().map((x) => x), // NaN, -0, infinities: not JSON, but a form may send them
  fc.string({ unit: 'binary', maxLength: 50 }),
)

describe('zod schemas under fuzzed input', () => {
  it('finds the schemas to fuzz (every module contributes, no factory is left out)', () => {
    const files = new Set(schemas.map(([n]) => n.split(' ')[0]))
    for (const file of Object.keys(modules)) expect(files, `${file} has no zod schema export`).toContain(file)
    expect(unlistedFactories, 'a new schema factory: add it to FACTORIES').toEqual([])
    expect(schemas.length).toBeGreaterThanOrEqual(20)
  })

  for (const [name, schema] of schemas) {
    it(`${name}: arbitrary JSON never throws, and every failure names a field or says why`, () => {
      const keys = keysOf(schema)
      const keyed = keys.length
        ? fc.dictionary(fc.constantFrom(...keys, '__proto__', 'extra'), hostile, { maxKeys: keys.length + 2 })
        : fc.jsonValue()
      fc.assert(
        fc.property(fc.oneof(fc.jsonValue(), keyed, hostile), (input) => {
          let result: ReturnType<typeof schema.safeParse>
          try {
            result = schema.safeParse(input)
          } catch (error) {
            throw new Error(`safeParse threw ${(error as Error)?.name}: ${(error as Error)?.message}`)
          }
          if (result.success) return
          const issues = result.error.issues
          expect(issues.length).toBeGreaterThan(0)
          for (const issue of issues) {
            expect(Array.isArray(issue.path)).toBe(true)
            expect(issue.path.length > 0 || (typeof issue.message === 'string' && issue.message.length > 0)).toBe(true)
            expect(typeof issue.message).toBe('string')
            expect(issue.message.length).toBeGreaterThan(0)
          }
          // the sentence the API answers with
          const answer = zodMessage(result.error)
          expect(answer.message).toMatch(/^Invalid input: .+: .+/)
          expect(answer.issues.length).toBe(issues.length)
        }),
        { numRuns: RUNS },
      )
    })
  }
})
