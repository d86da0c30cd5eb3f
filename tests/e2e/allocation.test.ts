// Engine allocation through the API on the demo's touring team: the solver's proposal, accepting
// it into the event plans, a hand-made plan refused with its violation named, an infeasible
// workshop named, and bad entries refused. The team's event plans and bookings are put back after.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { db, signIn, USERS, type Client } from './helpers'

let manager: Client
let engineer: Client
let teamId: number
let savedPlans: any[] = []
let savedRebuilds: any[] = []
const weeksAdded: string[] = []

beforeAll(async () => {
  manager = await signIn(USERS.managerC)
  engineer = await signIn(USERS.supplierEngineer)
  teamId = (await db()('organisations').where('name', 'Redfern Lattice Racing').first()).id
  savedPlans = await db()('event_plans').where('team_id', teamId)
  savedRebuilds = await db()('planned_rebuilds').where('team_id', teamId)
})

afterAll(async () => {
  await db()('event_plans').where('team_id', teamId).delete()
  if (savedPlans.length) await db()('event_plans').insert(savedPlans)
  await db()('planned_rebuilds').where('team_id', teamId).delete()
  if (savedRebuilds.length) await db()('planned_rebuilds').insert(savedRebuilds)
  const supplier = await db()('organisations').where('name', 'Keelbrook Engine Works').first()
  if (weeksAdded.length) await db()('workshop_weeks').where('supplier_id', supplier.id).whereIn('week_start', weeksAdded).delete()
  await db()('life_revision').where('id', 1).increment('revision', 1)
})

/** Per engine, the planned hours run between its rebuilds never exceed what it has: summed here from the answer's own inputs. */
function lifeHolds(input: any, plan: { assignments: any[]; rebuilds: any[] }) {
  const order = [...input.events].sort((a: any, b: any) => Date.parse(a.startsAt) - Date.parse(b.startsAt))
  for (const eng of input.engines) {
    let left = Math.max(0, eng.headroomHours)
    for (const ev of order) {
      if (plan.rebuilds.some((r) => r.engineId === eng.id && r.beforeEventId === ev.id)) left = eng.freshHeadroomHours
      for (const a of plan.assignments.filter((x) => x.engineId === eng.id)) {
        const entry = input.entries.find((e: any) => e.id === a.entryId)
        if (entry.eventId === ev.id) left -= entry.plannedSeconds / 3600
      }
      if (left < -1e-6) return `${eng.serial} short at ${ev.name}`
    }
  }
  return 'holds'
}

describe('engine allocation for the touring team', () => {
  it('proposes a plan that fills every entry and keeps every engine short of its warning level', async () => {
    const data = await manager.get('/api/allocation')
    expect(data.status).toBe(200)
    expect(data.body.team.name).toBe('Redfern Lattice Racing')
    // Demo: two cars in each coming touring round, 3:30 h each.
    expect(data.body.input.entries.length).toBe(2 * data.body.input.events.length)
    expect(data.body.input.entries.every((e: any) => e.plannedSeconds === 12_600)).toBe(true)
    expect(data.body.input.engines.map((e: any) => e.serial)).toEqual(['KT4-2101', 'KT4-2102', 'KT4-2103', 'KT4-2104'])

    const res = await manager.post('/api/allocation/solve', {})
    expect(res.status).toBe(200)
    // The best plan, or (on a busy machine, at the solver's time limit) the best found, every rule met.
    expect(['optimal', 'feasible']).toContain(res.body.outcome.status)
    const plan = res.body.outcome.plan
    expect(plan.assignments.map((a: any) => a.entryId).sort((a: number, b: number) => a - b)).toEqual(data.body.input.entries.map((e: any) => e.id).sort((a: number, b: number) => a - b))
    expect(res.body.check.violations).toEqual([])
    expect(lifeHolds(data.body.input, plan)).toBe('holds')
    // Every row says why its engine was chosen.
    expect(res.body.check.rows.every((r: any) => /to its warning level/.test(r.reason))).toBe(true)
  })

  it('accepts the proposal into the event plans and books its rebuilds', async () => {
    const { body } = await manager.post('/api/allocation/solve', {})
    const plan = body.outcome.plan
    const res = await manager.post('/api/allocation/accept', plan)
    expect(res.status).toBe(200)
    expect(res.body).toEqual({ accepted: plan.assignments.length, rebuilds: body.check.rebuilds.length })
    const data = (await manager.get('/api/allocation')).body
    const eventIds = data.input.events.map((e: any) => e.id)
    const rows = await db()('event_plans').where('team_id', teamId).whereIn('event_id', eventIds)
    expect(rows).toHaveLength(plan.assignments.length)
    for (const a of plan.assignments) {
      const entry = data.input.entries.find((e: any) => e.id === a.entryId)
      expect(rows.find((r: any) => r.event_id === entry.eventId && r.chassis === entry.chassis)?.engine_id).toBe(a.engineId)
    }
    expect(await db()('planned_rebuilds').where('team_id', teamId).count({ n: '*' }).first()).toMatchObject({ n: body.check.rebuilds.length })
    expect(data.currentCheck.violations).toEqual([])
    const audit = await db()('audit_log').where({ entity: 'allocation', entity_id: String(teamId), action: 'accept' }).orderBy('id', 'desc').first()
    expect(audit).toBeTruthy()
  })

  it('refuses a plan changed by hand that puts one engine on both cars, naming the violation, and writes nothing', async () => {
    const data = (await manager.get('/api/allocation')).body
    const first = [...data.input.events].sort((a: any, b: any) => Date.parse(a.startsAt) - Date.parse(b.startsAt))[0]
    const [a, b] = data.input.entries.filter((e: any) => e.eventId === first.id)
    const engine = data.input.engines.find((e: any) => e.serial === 'KT4-2104')
    const others = data.current.assignments.filter((x: any) => x.entryId !== a.id && x.entryId !== b.id)
    const before = await db()('event_plans').where('team_id', teamId).orderBy('id')
    const res = await manager.post('/api/allocation/accept', { assignments: [...others, { entryId: a.id, engineId: engine.id }, { entryId: b.id, engineId: engine.id }], rebuilds: [] })
    expect(res.status).toBe(409)
    expect(res.body.message).toContain(`KT4-2104 is on 2 entries at ${first.name}`)
    expect(res.body.data.violations.some((v: any) => v.kind === 'double')).toBe(true)
    expect(await db()('event_plans').where('team_id', teamId).orderBy('id')).toEqual(before)
  })

  it('names the workshop when no week has room for a rebuild the entries need', async () => {
    const data = (await manager.get('/api/allocation')).body
    for (const w of data.weeks) {
      const r = await engineer.request('PUT', '/api/allocation/workshop-week', { weekStart: w.weekStart, rebuilds: 0 })
      expect(r.status).toBe(200)
      weeksAdded.push(w.weekStart)
    }
    // The demo's engines cannot carry every round on their present builds (the proposal above
    // needed a rebuild): with no workshop room at all, the plan is infeasible and says why.
    const res = await manager.post('/api/allocation/solve', {})
    expect(res.status).toBe(200)
    expect(res.body.outcome.status).toBe('infeasible')
    expect(res.body.outcome.unmet[0].kind).toBe('capacity')
    expect(res.body.outcome.unmet[0].message).toMatch(/^The workshop can take 0 rebuilds in the week of \d{4}-\d{2}-\d{2}; the entries need more$/)
  })

  it('refuses bad entries and weeks with 400 naming the field', async () => {
    const data = (await manager.get('/api/allocation')).body
    const ev = data.events[0]
    const dup = await manager.request('PUT', '/api/allocation/entries', { eventId: ev.id, entries: [{ chassis: 'RLR-T-31', plannedSeconds: 3600 }, { chassis: 'rlr-t-31', plannedSeconds: 3600 }] })
    expect(dup.status).toBe(400)
    expect(dup.body.message).toContain('entries: each car is entered once')
    const short = await manager.request('PUT', '/api/allocation/entries', { eventId: ev.id, entries: [{ chassis: 'RLR-T-31', plannedSeconds: 10 }] })
    expect(short.status).toBe(400)
    expect(short.body.message).toContain('plannedSeconds')
    const tuesday = await engineer.request('PUT', '/api/allocation/workshop-week', { weekStart: '2027-03-16', rebuilds: 1 })
    expect(tuesday.status).toBe(400)
    expect(tuesday.body.message).toContain('weekStart: must be a Monday')
    const unknownEvent = await manager.request('PUT', '/api/allocation/entries', { eventId: 999_999, entries: [] })
    expect(unknownEvent.status).toBe(404)
  })
})
