// The fleet life board: one summary per visible engine, filtered and sorted on the server, kept
// ready as JSON text and gzip per fleet-life computation, scope and filter.
import { gzipSync } from 'node:zlib'
import type { Knex } from 'knex'
import { scopeKey, type Actor } from '../utils/guard'
import type { FleetLife } from './life'
import { visibleFleet } from './fleet-scope'

export interface BoardFilter {
  team?: number
  type?: number
  status?: 'ok' | 'warning' | 'due' | 'over'
  location?: 'car' | 'shelf' | 'supplier' | 'teardown'
  q?: string
  sort: 'consumed' | 'due' | 'serial'
}

/** The answer as JSON text and its gzip, so a route can send either without compressing again. */
export interface PreparedAnswer {
  text: string
  gzip: Buffer
}

// The board looks a few events ahead; the planning view asks the engines for more.
const BOARD_EVENTS = 4

export async function boardAnswer(db: Knex, actor: Actor, q: BoardFilter): Promise<PreparedAnswer> {
  const { life, engines } = await visibleFleet(db, actor)
  // The answer for one fleet-life computation, scope and filter is the same text every time: reuse it.
  const cacheKey = `${scopeKey(actor)}|${JSON.stringify(q)}`
  const cached = answersFor(life).get(cacheKey)
  if (cached) return cached
  const answer = JSON.stringify(boardOf(life, engines, q))
  const entry = { text: answer, gzip: gzipSync(answer, { level: 6 }) }
  rememberAnswer(life, cacheKey, entry)
  return entry
}

function boardOf(life: FleetLife, engines: FleetLife['engines'], q: BoardFilter) {
  const teams = new Map<number, string>()
  const types = new Map<number, { id: number; code: string; name: string }>()
  for (const e of engines) {
    if (e.teamId) teams.set(e.teamId, e.teamName ?? '')
    types.set(e.engineTypeId, { id: e.engineTypeId, code: e.engineTypeCode, name: e.engineTypeName })
  }
  let rows = engines
  if (q.team) rows = rows.filter((e) => e.teamId === q.team)
  if (q.type) rows = rows.filter((e) => e.engineTypeId === q.type)
  if (q.status) rows = rows.filter((e) => e.worst.status === q.status)
  if (q.location) rows = rows.filter((e) => e.location === q.location)
  if (q.q) {
    const needle = q.q.toLowerCase()
    rows = rows.filter((e) => e.serial.toLowerCase().includes(needle))
  }
  const dueIndex = (e: (typeof rows)[number]) => {
    if (e.worst.status === 'over') return -1
    const i = e.canFinish.findIndex((c) => !c.ok)
    return i === -1 ? Number.MAX_SAFE_INTEGER : i
  }
  const sorted = [...rows].sort((a, b) =>
    q.sort === 'serial' ? a.serial.localeCompare(b.serial) : q.sort === 'due' ? dueIndex(a) - dueIndex(b) || b.worst.fraction - a.worst.fraction : b.worst.fraction - a.worst.fraction,
  )
  return {
    engines: sorted.map(({ parts: _parts, emptyPositions: _empty, canFinish, ...summary }) => ({ ...summary, canFinish: canFinish.slice(0, BOARD_EVENTS) })),
    teams: [...teams.entries()].map(([id, name]) => ({ id, name })).sort((a, b) => a.name.localeCompare(b.name)),
    engineTypes: [...types.values()].sort((a, b) => a.code.localeCompare(b.code)),
    computedAt: life.computedAt,
  }
}

const answers = new WeakMap<object, Map<string, PreparedAnswer>>()
function answersFor(life: object) {
  let m = answers.get(life)
  if (!m) answers.set(life, (m = new Map()))
  return m
}
function rememberAnswer(life: object, key: string, answer: PreparedAnswer) {
  const m = answersFor(life)
  if (m.size > 200) m.delete(m.keys().next().value!)
  m.set(key, answer)
}
