// The modules holding the zod schemas the API validates with: every module of shared/schemas/,
// the oil sample schema and the logger mapping, by path. Tests that look at every schema start here.
import { readdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'

export async function schemaModules(): Promise<Record<string, Record<string, unknown>>> {
  const shared = fileURLToPath(new URL('../../shared/', import.meta.url))
  const modules: Record<string, Record<string, unknown>> = {}
  for (const f of readdirSync(`${shared}schemas`).filter((f) => f.endsWith('.ts'))) {
    modules[`shared/schemas/${f}`] = await import(`${shared}schemas/${f}`)
  }
  modules['shared/domain/oil/schema.ts'] = await import('../../shared/domain/oil/schema')
  modules['shared/domain/logger-mapping.ts'] = await import('../../shared/domain/logger-mapping')
  return modules
}
