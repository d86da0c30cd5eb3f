// The MIP solver: HiGHS compiled to WebAssembly (package `highs`). The .wasm file is read by path
// and handed over as bytes, so the built server finds it wherever its node_modules were traced to.
import { readFile } from 'node:fs/promises'
import { createRequire } from 'node:module'
import loadHighs from 'highs'

type Highs = Awaited<ReturnType<typeof loadHighs>>
let instance: Promise<Highs> | null = null

function highs(): Promise<Highs> {
  if (!instance) {
    instance = (async () => {
      const wasmBinary = await readFile(createRequire(import.meta.url).resolve('highs/runtime'))
      return loadHighs({ wasmBinary })
    })()
    instance.catch(() => {
      instance = null
    })
  }
  return instance
}

export interface LpAnswer {
  status: string
  objective?: number
  values: Record<string, number>
}

/** Solves a CPLEX LP-format model; the columns come back by name. Each call uses a fresh native solver. */
export async function solveLp(lp: string, opts: { timeLimitS?: number } = {}): Promise<LpAnswer> {
  const solver = await highs()
  const result = solver.solve(lp, { output_flag: false, time_limit: opts.timeLimitS ?? 15 })
  const values: Record<string, number> = {}
  for (const [name, col] of Object.entries(result.Columns ?? {})) values[name] = (col as { Primal?: number }).Primal ?? 0
  return { status: result.Status, objective: (result as { ObjectiveValue?: number }).ObjectiveValue, values }
}
