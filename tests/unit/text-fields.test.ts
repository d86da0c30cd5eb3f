// Every text field of every zod schema the API validates with refuses control characters: each
// module of shared/schemas/, the oil sample schema, the teardown characteristic and the logger
// mapping are imported, and every string found anywhere inside every exported schema (object
// fields, list items, record keys and values, optional, default, union and pipe wrappers) is
// checked by itself. A text field added later without `line()` or `multiline()` fails here.
import { describe, expect, it } from 'vitest'
import { schemaModules } from './schema-modules'
import { z } from 'zod'
import { MULTI_LINE_MESSAGE, SINGLE_LINE_MESSAGE } from '../../shared/text'

const modules = await schemaModules()
modules['shared/domain/teardown.ts'] = await import('../../shared/domain/teardown')

const FACTORIES: Record<string, (f: (...a: any[]) => unknown) => unknown> = {
  oilSampleSchema: (f) => f({ now: new Date('2026-06-01T12:00:00Z'), builtAt: new Date('2026-01-10T00:00:00Z') }),
}

function isZod(v: unknown): v is z.ZodType {
  return typeof v === 'object' && v !== null && '_zod' in v && typeof (v as z.ZodType).safeParse === 'function'
}

/** Every string schema inside `schema`, with where it sits. */
function strings(schema: unknown, path: string, out: [string, z.ZodType][], seen = new Set<unknown>()) {
  if (!isZod(schema) || seen.has(schema)) return
  seen.add(schema)
  const def = (schema as any)._zod.def as Record<string, any>
  if (def.type === 'string') {
    out.push([path, schema])
    return
  }
  if (def.shape) for (const [k, v] of Object.entries(def.shape as Record<string, unknown>)) strings(v, `${path}.${k}`, out, seen)
  if (def.element) strings(def.element, `${path}[]`, out, seen)
  if (def.keyType) strings(def.keyType, `${path}{key}`, out, seen)
  if (def.valueType) strings(def.valueType, `${path}{value}`, out, seen)
  for (const k of ['innerType', 'in', 'out', 'left', 'right', 'catchall', 'rest']) if (def[k]) strings(def[k], path, out, seen)
  for (const o of def.options ?? []) strings(o, path, out, seen)
  for (const o of def.items ?? []) strings(o, path, out, seen)
}

const found: [string, z.ZodType][] = []
for (const [file, mod] of Object.entries(modules)) {
  for (const [name, value] of Object.entries(mod)) {
    if (isZod(value)) strings(value, `${file} ${name}`, found)
    else if (typeof value === 'function' && FACTORIES[name]) strings(FACTORIES[name]!(value as (...a: any[]) => unknown), `${file} ${name}()`, found)
  }
}
// one schema can be found through several exports; each place once
const fields = [...new Map(found.map(([p, s]) => [s, p])).entries()].map(([s, p]) => [p, s] as const)

const messages = (schema: z.ZodType, value: string) => {
  const r = schema.safeParse(value)
  return r.success ? [] : r.error.issues.map((i) => i.message)
}

/** The fields that keep line breaks: notes, comments, postal addresses and the text of an uploaded lab file. */
const MULTI_LINE = [
  'shared/schemas/alerts.ts AlertAckSchema.comment',
  'shared/schemas/billing.ts BillingContactSchema.billingAddress',
  'shared/schemas/oil.ts OilImportSchema.csv',
  'shared/schemas/teardown.ts TeardownStartSchema.note',
]

describe('control characters in text fields', () => {
  it('finds the text fields of every schema module', () => {
    expect(fields.length).toBeGreaterThanOrEqual(60)
    for (const file of Object.keys(modules)) expect(fields.some(([p]) => p.startsWith(`${file} `)), file).toBe(true)
  })

  it.each(fields.map(([p, s]) => [p, s] as const))('%s refuses NUL and the other C0 and C1 controls, keeps tab', (_path, schema) => {
    // a strict format of zod's own (an ISO date-time) admits no control character by itself
    const format = (schema as any)._zod.def.format as string | undefined
    for (const bad of ['\u0000', '\u0001', '\u0007', '\u0008', '\u000b', '\u000c', '\u001b', '\u001f', '\u007f', '\u0085', '\u009f']) {
      const m = messages(schema, `Ab${bad}Cd`)
      if (format) expect(m.length, `${format} ${JSON.stringify(bad)}`).toBeGreaterThan(0)
      else expect(m.some((x) => x === SINGLE_LINE_MESSAGE || x === MULTI_LINE_MESSAGE), JSON.stringify(bad)).toBe(true)
    }
    const tab = messages(schema, 'Ab\tCd')
    expect(tab).not.toContain(SINGLE_LINE_MESSAGE)
    expect(tab).not.toContain(MULTI_LINE_MESSAGE)
  })

  it('refuses CR and LF in one-line fields; keeps them in the multi-line ones only', () => {
    const multi: string[] = []
    for (const [path, schema] of fields) {
      const m = [...messages(schema, 'Ab\nCd'), ...messages(schema, 'Ab\rCd')]
      if (m.includes(SINGLE_LINE_MESSAGE) || (schema as any)._zod.def.format) continue
      expect(m, path).not.toContain(MULTI_LINE_MESSAGE)
      multi.push(path)
    }
    // TeardownStartSchema's note is the one `text()` the finding and sign-off notes share
    expect(multi.sort()).toEqual(expect.arrayContaining(MULTI_LINE))
    expect(multi.every((p) => /\.(note|comment|csv|billingAddress)$/.test(p)), multi.join(', ')).toBe(true)
  })

  it('names the field in the API\'s answer', async () => {
    const { UserCreateSchema } = await import('../../shared/schemas/user')
    const { zodMessage } = await import('../../server/utils/errors')
    const r = UserCreateSchema.safeParse({ email: 'a@example.test', name: 'Nul\u0000Name', role: 'mechanic', organisationId: 2, password: 'long-enough-password' })
    expect(r.success).toBe(false)
    expect(zodMessage(r.error!).message).toBe(`Invalid input: name: ${SINGLE_LINE_MESSAGE}`)
  })
})
