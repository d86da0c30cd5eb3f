import { existsSync, readdirSync, statSync } from 'node:fs'
import { join } from 'node:path'
import knexFactory, { type Knex } from 'knex'
import { afterAll } from 'vitest'
import { knexConfig } from '../../db/knexfile'
import { DEMO_PASSWORD } from '../../db/seeds/demo'

export const BASE = `http://127.0.0.1:${process.env.CL_TEST_PORT || '3390'}`
export { DEMO_PASSWORD }

let knex: Knex | undefined
/** Direct database access, to assert what was (not) written. */
export function db(): Knex {
  if (!knex) {
    knex = knexFactory(knexConfig(process.env.NUXT_DATABASE_URL))
    afterAll(async () => {
      await knex?.destroy()
      knex = undefined
    })
  }
  return knex
}

/** Rows in a table now. */
export const count = async (table: string) => Number((await db()(table).count({ n: '*' }).first())!.n)

/** Files under the test server's storage folder: an import that fails must leave none behind. */
export function storedFiles(): number {
  const dir = process.env.NUXT_STORAGE_DIR
  if (!dir || !existsSync(dir)) return 0
  let n = 0
  const walk = (d: string) => {
    for (const f of readdirSync(d)) {
      const p = join(d, f)
      if (statSync(p).isDirectory()) walk(p)
      else n++
    }
  }
  walk(dir)
  return n
}

export interface ApiAnswer<T = any> {
  status: number
  body: T
  headers: Headers
}

export class Client {
  cookie = ''
  constructor(public origin = BASE) {}

  async request<T = any>(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<ApiAnswer<T>> {
    const res = await fetch(`${this.origin}${path}`, {
      method,
      headers: {
        ...(body !== undefined && !(body instanceof FormData) ? { 'content-type': 'application/json' } : {}),
        ...(this.cookie ? { cookie: this.cookie } : {}),
        origin: this.origin,
        ...headers,
      },
      body: body === undefined ? undefined : body instanceof FormData ? body : JSON.stringify(body),
      redirect: 'manual',
    })
    const setCookie = res.headers.getSetCookie?.() ?? []
    for (const c of setCookie) {
      const pair = c.split(';')[0]!
      if (pair.startsWith('nuxt-session=')) this.cookie = pair.endsWith('=') ? '' : pair
    }
    const text = await res.text()
    let parsed: any = text
    try {
      parsed = text ? JSON.parse(text) : null
    } catch {}
    return { status: res.status, body: parsed, headers: res.headers }
  }

  get<T = any>(path: string) {
    return this.request<T>('GET', path)
  }
  post<T = any>(path: string, body?: unknown) {
    return this.request<T>('POST', path, body ?? {})
  }
  patch<T = any>(path: string, body?: unknown) {
    return this.request<T>('PATCH', path, body ?? {})
  }
  put<T = any>(path: string, body?: unknown) {
    return this.request<T>('PUT', path, body ?? {})
  }
  delete<T = any>(path: string) {
    return this.request<T>('DELETE', path)
  }
}

export async function signIn(email: string, password = DEMO_PASSWORD): Promise<Client> {
  const client = new Client()
  const res = await client.post('/api/auth/login', { email, password })
  if (res.status !== 200) throw new Error(`sign-in of ${email} failed: ${res.status} ${JSON.stringify(res.body)}`)
  return client
}

export const USERS = {
  admin: 'admin@keelbrook.test',
  supplierEngineer: 'engineer@keelbrook.test',
  supplierMechanic: 'workshop@keelbrook.test',
  managerA: 'manager@marlowe.test',
  raceA: 'race@marlowe.test',
  mechanicA: 'mechanic@marlowe.test',
  managerB: 'manager@tidewater.test',
  raceB: 'race@tidewater.test',
  managerC: 'manager@redfern.test',
} as const

let counter = 0
export function uniqueEmail(prefix = 'user') {
  counter += 1
  return `${prefix}-${Date.now().toString(36)}-${counter}@example.test`
}
