import { gzipSync } from 'node:zlib'
import { z } from 'zod'
import { line } from '#shared/text'
import { FLEET_READERS } from '#shared/roles'
import { visibleFleet } from '../services/fleet-scope'

const Query = z.object({
  team: z.coerce.number().int().positive().optional(),
  type: z.coerce.number().int().positive().optional(),
  status: z.enum(['ok', 'warning', 'due', 'over']).optional(),
  location: z.enum(['car', 'shelf', 'supplier', 'teardown']).optional(),
  q: line().trim().max(60).optional(),
  sort: z.enum(['consumed', 'due', 'serial']).default('consumed'),
})

// The fleet life board: one summary per visible engine, filtered and sorted on the server.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const q = readValidQuery(event, Query)
  const { life, engines } = await visibleFleet(useDb(), actor)
  // The answer for one fleet-life computation, scope and filter is the same text every time: reuse it.
  const scope = actor.role === 'admin' ? 'all' : `${actor.organisationKind}:${actor.organisationId}`
  const cacheKey = `${scope}|${JSON.stringify(q)}`
  const cached = answersFor(life).get(cacheKey)
  if (cached) return send(event, cached)
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
  const answer = JSON.stringify({
    // The board looks a few events ahead; the planning view asks the engines for more.
    engines: sorted.map(({ parts: _parts, emptyPositions: _empty, canFinish, ...summary }) => ({ ...summary, canFinish: canFinish.slice(0, BOARD_EVENTS) })),
    teams: [...teams.entries()].map(([id, name]) => ({ id, name })).sort((a, b) => a.name.localeCompare(b.name)),
    engineTypes: [...types.values()].sort((a, b) => a.code.localeCompare(b.code)),
    computedAt: life.computedAt,
  })
  const entry = { text: answer, gzip: gzipSync(answer, { level: 6 }) }
  rememberAnswer(life, cacheKey, entry)
  return send(event, entry)
})

const BOARD_EVENTS = 4

interface Answer { text: string; gzip: Buffer }

function send(event: Parameters<typeof getRequestHeader>[0], a: Answer) {
  setResponseHeader(event, 'content-type', 'application/json; charset=utf-8')
  setResponseHeader(event, 'vary', 'accept-encoding')
  if (/\bgzip\b/.test(getRequestHeader(event, 'accept-encoding') ?? '')) {
    setResponseHeader(event, 'content-encoding', 'gzip')
    return a.gzip
  }
  return a.text
}

const answers = new WeakMap<object, Map<string, Answer>>()
function answersFor(life: object) {
  let m = answers.get(life)
  if (!m) answers.set(life, (m = new Map()))
  return m
}
function rememberAnswer(life: object, key: string, text: Answer) {
  const m = answersFor(life)
  if (m.size > 200) m.delete(m.keys().next().value!)
  m.set(key, text)
}
