// Engine allocation: hand-built cases whose optimum is worked out in the comments, solved by the
// real solver (HiGHS through the server's loader), and plans changed by hand checked for violations.
// The rules (tightest fit first, fewer rebuilds on a tie, warning level never reached during an
// event, workshop lead time and weekly capacity) are common practice in customer racing, no
// published source; the expected plans are derived here by hand.
import { describe, expect, it } from 'vitest'
import { buildAllocationModel, checkPlan, headroomFresh, headroomNow, rebuildWeek, solveAllocation, type AllocationInput, type AllocEngine, type AllocEvent } from '../../shared/domain/allocation'
import { solveLp } from '../../server/utils/highs'

const H = 3600
const NOW = '2027-01-04T00:00:00.000Z'

function ev(id: number, startsAt: string, days = 2, rebuildLeadDays = 7): AllocEvent {
  const end = new Date(Date.parse(startsAt) + days * 86_400_000).toISOString()
  return { id, name: `Round ${id}`, startsAt, endsAt: end, rebuildLeadDays }
}
function engine(id: number, headroomHours: number, freshHeadroomHours = 20): AllocEngine {
  return { id, serial: `E${id}`, headroomHours, governing: null, freshHeadroomHours, freshGoverning: null }
}
const solve = (input: AllocationInput) => solveAllocation(input, (lp) => solveLp(lp))

// Three rounds three weeks apart; each round's rebuild slot opens 7 days before it.
const R1 = ev(1, '2027-03-01T09:00:00.000Z')
const R2 = ev(2, '2027-03-22T09:00:00.000Z')
const R3 = ev(3, '2027-04-12T09:00:00.000Z')
const weeksOpen = (n: number) => ({ [rebuildWeek(R1)]: n, [rebuildWeek(R2)]: n, [rebuildWeek(R3)]: n })

describe('rebuild slot week (hand-computed calendar)', () => {
  it('is the Monday of the day the engine must reach the workshop', () => {
    // 2027-03-22 is a Monday; 7 days earlier is Monday 2027-03-15.
    expect(rebuildWeek(R2)).toBe('2027-03-15')
    // 2027-03-01 (Monday) less 7 days is Monday 2027-02-22.
    expect(rebuildWeek(R1)).toBe('2027-02-22')
    // A Sunday slot belongs to the week that began six days before: 2027-03-07 is a Sunday.
    expect(rebuildWeek(ev(9, '2027-03-14T09:00:00.000Z'))).toBe('2027-03-01')
  })
})

describe('allocation solved by HiGHS against hand-worked optima', () => {
  it('gives one entry the engine whose life fits its running most tightly', async () => {
    // One 3 h entry. E1 leaves 7 h, E2 leaves 1 h, E3 (2.5 h) only after a rebuild (leaves 17 h).
    const input: AllocationInput = { now: NOW, events: [R1], entries: [{ id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H }], engines: [engine(1, 10), engine(2, 4), engine(3, 2.5)], capacity: weeksOpen(1) }
    const out = await solve(input)
    expect(out.status).toBe('optimal')
    if (out.status !== 'optimal') return
    expect(out.plan).toEqual({ assignments: [{ entryId: 11, engineId: 2 }], rebuilds: [] })
    expect(out.objective).toBeCloseTo(1, 6)
    const check = checkPlan(input, out.plan)
    expect(check.violations).toEqual([])
    expect(check.rows[0]).toMatchObject({ serial: 'E2', headroomBefore: 4, headroomAfter: 1, rebuiltBefore: false })
    expect(check.rows[0]!.reason).toContain('next free engine, E1, would leave 7.0 h')
  })

  it('spends the short engine first and keeps the long one for later (earlier tight fit breaks the tie)', async () => {
    // Two rounds of 3 h, one car. E1 10 h, E2 3.5 h. Both orders leave 0.5 + 7 = 7.5 h in all;
    // E1 twice leaves 7 + 4 = 11 h. The tie goes to the tighter fit at the earlier round: E2, then E1.
    // Objective 0.5 (1 + 1e-5) + 7 = 7.500005.
    const input: AllocationInput = {
      now: NOW,
      events: [R1, R2],
      entries: [{ id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H }, { id: 21, eventId: 2, chassis: 'A', plannedSeconds: 3 * H }],
      engines: [engine(1, 10), engine(2, 3.5)],
      capacity: weeksOpen(1),
    }
    const out = await solve(input)
    expect(out.status).toBe('optimal')
    if (out.status !== 'optimal') return
    expect(out.plan.assignments).toEqual([{ entryId: 11, engineId: 2 }, { entryId: 21, engineId: 1 }])
    expect(out.plan.rebuilds).toEqual([])
    expect(out.objective).toBeCloseTo(7.500005, 6)
  })

  it('rebuilds where the engine runs out, and only once', async () => {
    // One engine (4 h now, 10 h fresh), three rounds of 3 h. After round 1 it has 1 h: it must be
    // rebuilt before round 2 (before round 3 would be too late). Leftovers 1, 7, 4; one rebuild.
    // Objective 1 (1 + 2e-5) + 7 (1 + 1e-5) + 4 + 0.01 (1 + 1e-3), the rebuild one event before
    // the last = 12.0101.
    const input: AllocationInput = {
      now: NOW,
      events: [R1, R2, R3],
      entries: [1, 2, 3].map((k) => ({ id: k * 10 + 1, eventId: k, chassis: 'A', plannedSeconds: 3 * H })),
      engines: [engine(1, 4, 10)],
      capacity: weeksOpen(1),
    }
    const out = await solve(input)
    expect(out.status).toBe('optimal')
    if (out.status !== 'optimal') return
    expect(out.plan.rebuilds).toEqual([{ engineId: 1, beforeEventId: 2 }])
    expect(out.objective).toBeCloseTo(12.0101, 6)
    const check = checkPlan(input, out.plan)
    expect(check.violations).toEqual([])
    expect(check.rows.map((r) => r.headroomAfter)).toEqual([1, 7, 4])
    expect(check.rebuilds).toMatchObject([{ engineId: 1, beforeEventId: 2, weekStart: '2027-03-15', slotStart: '2027-03-15T09:00:00.000Z' }])
  })

  it('moves the rebuild to a week with room when the workshop is full', async () => {
    // As above with four rounds (R4 three weeks after R3) and a 2 h fourth entry, the engine 7 h
    // now. Runs 3 (left 4), 3 (left 1): a rebuild before R3 is needed ... unless the workshop is
    // full that week; then it is rebuilt before R2 instead (leftovers 4, 7, 4, 2 against 4, 1, 7, 5).
    const R4 = ev(4, '2027-05-03T09:00:00.000Z')
    const input: AllocationInput = {
      now: NOW,
      events: [R1, R2, R3, R4],
      entries: [
        { id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H },
        { id: 21, eventId: 2, chassis: 'A', plannedSeconds: 3 * H },
        { id: 31, eventId: 3, chassis: 'A', plannedSeconds: 3 * H },
        { id: 41, eventId: 4, chassis: 'A', plannedSeconds: 2 * H },
      ],
      engines: [engine(1, 7, 10)],
      capacity: { ...weeksOpen(1), [rebuildWeek(R4)]: 1 },
    }
    const open = await solve(input)
    expect(open.status === 'optimal' && open.plan.rebuilds).toEqual([{ engineId: 1, beforeEventId: 3 }])
    const full = await solve({ ...input, capacity: { ...input.capacity, [rebuildWeek(R3)]: 0 } })
    expect(full.status === 'optimal' && full.plan.rebuilds).toEqual([{ engineId: 1, beforeEventId: 2 }])
  })

  it('names the workshop week when no plan fits its capacity (infeasible)', async () => {
    // As "rebuilds where the engine runs out", with round 1's slot passed (now 25 Feb) and no room
    // in round 2's week: no plan. Relaxing round 1's slot would also do; capacity is named first.
    const input: AllocationInput = {
      now: '2027-02-25T00:00:00.000Z',
      events: [R1, R2, R3],
      entries: [1, 2, 3].map((k) => ({ id: k * 10 + 1, eventId: k, chassis: 'A', plannedSeconds: 3 * H })),
      engines: [engine(1, 4, 10)],
      capacity: { ...weeksOpen(1), [rebuildWeek(R2)]: 0 },
    }
    const out = await solve(input)
    expect(out.status).toBe('infeasible')
    if (out.status !== 'infeasible') return
    expect(out.unmet).toHaveLength(1)
    expect(out.unmet[0]).toMatchObject({ kind: 'capacity', weekStart: '2027-03-15' })
    expect(out.unmet[0]!.message).toBe('The workshop can take 0 rebuilds in the week of 2027-03-15; the entries need more')
  })

  it('names the lead time when the rebuild slot falls inside the event before (infeasible)', async () => {
    // Round 2 starts 5 days after round 1 ends; its slot opens 7 days ahead, while round 1 runs,
    // and round 1's own slot (22 Feb) has passed: the engine cannot be rebuilt for either round.
    const near = ev(2, '2027-03-08T09:00:00.000Z')
    const input: AllocationInput = {
      now: '2027-02-25T00:00:00.000Z',
      events: [R1, near],
      entries: [{ id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H }, { id: 21, eventId: 2, chassis: 'A', plannedSeconds: 3 * H }],
      engines: [engine(1, 4, 10)],
      capacity: { [rebuildWeek(R1)]: 1, [rebuildWeek(near)]: 1 },
    }
    const out = await solve(input)
    expect(out.status).toBe('infeasible')
    if (out.status !== 'infeasible') return
    // Relaxing either slot would do (each costs the same), so the diagnosis names one of the two.
    expect(out.unmet.map((u) => u.kind)).toEqual(['lead-time'])
    expect([
      'E1 cannot both run Round 1 and be in the workshop 7 days before Round 2 for its rebuild',
      "E1 would need a rebuild before Round 1, but the workshop's slot for it (7 days ahead) has already opened",
    ]).toContain(out.unmet[0]!.message)
  })

  it('names the entry when there are fewer engines than cars (infeasible)', async () => {
    const input: AllocationInput = {
      now: NOW,
      events: [R1],
      entries: [{ id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H }, { id: 12, eventId: 1, chassis: 'B', plannedSeconds: 3 * H }],
      engines: [engine(1, 10)],
      capacity: weeksOpen(1),
    }
    const out = await solve(input)
    expect(out.status).toBe('infeasible')
    if (out.status !== 'infeasible') return
    expect(out.unmet).toHaveLength(1)
    expect(out.unmet[0]).toMatchObject({ kind: 'unfilled', eventId: 1 })
    expect(out.unmet[0]!.message).toMatch(/^No engine can run [AB] at Round 1 \(3 h planned\)/)
  })

  it('writes a model HiGHS reads, with one fill row per entry and one capacity row per week', () => {
    const input: AllocationInput = { now: NOW, events: [R1, R2], entries: [{ id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H }, { id: 21, eventId: 2, chassis: 'A', plannedSeconds: 3 * H }], engines: [engine(1, 10)], capacity: weeksOpen(2) }
    const { lp } = buildAllocationModel(input)
    expect(lp.match(/^ fill_\d+:/gm)).toHaveLength(2)
    // Rebuilt before round 1 for round 1 alone (b_0_0_1) or for both rounds (b_0_0_2); before round 2 (b_0_1_2).
    expect(lp).toContain(' cap_20270222: b_0_0_1 + b_0_0_2 <= 2')
    expect(lp).toContain(' cap_20270315: b_0_1_2 <= 2')
  })
})

describe('a plan changed by hand', () => {
  const input: AllocationInput = {
    now: '2027-02-25T00:00:00.000Z', // round 1's slot (22 Feb) has passed; round 2's (15 Mar) is open
    events: [R1, R2],
    entries: [
      { id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H },
      { id: 12, eventId: 1, chassis: 'B', plannedSeconds: 3 * H },
      { id: 21, eventId: 2, chassis: 'A', plannedSeconds: 3 * H },
    ],
    engines: [engine(1, 10), engine(2, 2.5), engine(3, 5)],
    capacity: { [rebuildWeek(R1)]: 1, [rebuildWeek(R2)]: 0 },
  }

  it('reports an engine that would reach its warning level when its rebuild slot has passed', () => {
    // E2 has 2.5 h for a 3 h entry at round 1; a rebuild would have had to start on 22 Feb.
    const check = checkPlan(input, { assignments: [{ entryId: 11, engineId: 2 }, { entryId: 12, engineId: 1 }, { entryId: 21, engineId: 1 }] })
    expect(check.violations.map((v) => v.kind)).toEqual(['lead-time'])
    expect(check.violations[0]!.message).toBe('E2 needs a rebuild before Round 1, but its workshop slot opened on 2027-02-22 (7 days ahead) and has passed')
  })

  it('reports the workshop week that a hand-made rebuild overfills', () => {
    // E3 runs round 1 (5 - 3 = 2 h left) and round 2 (3 h): an implied rebuild in the week of 15 Mar, capacity 0.
    const check = checkPlan(input, { assignments: [{ entryId: 11, engineId: 3 }, { entryId: 12, engineId: 1 }, { entryId: 21, engineId: 3 }] })
    expect(check.rebuilds).toMatchObject([{ engineId: 3, beforeEventId: 2, weekStart: '2027-03-15' }])
    expect(check.violations).toEqual([{ kind: 'capacity', weekStart: '2027-03-15', message: 'The week of 2027-03-15 needs 1 rebuild; the workshop can take 0' }])
  })

  it('reports one engine on two cars, and a car left without an engine', () => {
    const check = checkPlan(input, { assignments: [{ entryId: 11, engineId: 1 }, { entryId: 12, engineId: 1 }] })
    expect(check.violations.map((v) => v.kind).sort()).toEqual(['double', 'unfilled'])
    expect(check.violations.find((v) => v.kind === 'unfilled')!.message).toBe('A at Round 2 has no engine')
    expect(check.violations.find((v) => v.kind === 'double')!.message).toBe('E1 is on 2 entries at Round 1; an engine runs one car per event')
  })

  it('never implies a rebuild inside an event: one engine on both cars runs past its warning level', () => {
    // E3 has 5 h: the first car leaves 2 h, the second car's 3 h would take it 1 h past.
    const check = checkPlan(input, { assignments: [{ entryId: 11, engineId: 3 }, { entryId: 12, engineId: 3 }, { entryId: 21, engineId: 1 }] })
    expect(check.rebuilds).toEqual([])
    expect(check.violations.map((v) => v.kind).sort()).toEqual(['double', 'life'])
    expect(check.violations.find((v) => v.kind === 'life')!.message).toBe('E3 would reach its warning level during Round 1: 3.0 h planned, 2.0 h left (life)')
  })

  it('reports an engine whose life cannot carry the entry even after a rebuild', () => {
    const small: AllocationInput = { ...input, now: NOW, engines: [engine(1, 2, 2.5)], entries: [{ id: 11, eventId: 1, chassis: 'A', plannedSeconds: 3 * H }], capacity: weeksOpen(1) }
    const check = checkPlan(small, { assignments: [{ entryId: 11, engineId: 1 }] })
    expect(check.violations.map((v) => v.kind)).toEqual(['life'])
    expect(check.violations[0]!.message).toBe('E1 would reach its warning level during Round 1: 3.0 h planned, 2.0 h left (life)')
  })
})

describe('hours to the warning level (hand-computed)', () => {
  const parts = [
    // 80 % of 40 h = 32 h, 20 used, 1 h/h: 12 h. 80 % of 30 eq. h = 24, 15 used, 1.5 eq. h/h: 6 h.
    { name: 'Conrod 1 R-1', warningLevel: 0.8, limits: [{ kind: 'hours' as const, label: 'h', used: 20, limit: 40, ratePerHour: 1 }, { kind: 'eqHours' as const, label: 'eq. h', used: 15, limit: 30, ratePerHour: 1.5 }] },
    // 90 % of 5000 km = 4500, 1000 used, 150 km/h: 23.33 h; over-rev budget 2 of 10 events: not projected.
    { name: 'Crankshaft C-1', warningLevel: 0.9, limits: [{ kind: 'km' as const, label: 'km', used: 1000, limit: 5000, ratePerHour: 150 }, { kind: 'overRev' as const, label: 'events', used: 2, limit: 10, ratePerHour: 0 }] },
  ]
  it('takes the nearest warning level over every part and limit', () => {
    expect(headroomNow(parts)).toEqual({ hours: 6, governing: 'Conrod 1 R-1: eq. h' })
  })
  it('after a rebuild: 24 / 1.5 = 16 h for the rod, 4500 / 150 = 30 h for the crank', () => {
    expect(headroomFresh(parts)).toEqual({ hours: 16, governing: 'Conrod 1 R-1: eq. h' })
  })
  it('is zero when an over-rev budget has reached its warning level', () => {
    const worn = [{ ...parts[1]!, limits: [{ kind: 'overRev' as const, label: 'events', used: 9, limit: 10, ratePerHour: 0 }] }]
    expect(headroomNow(worn)).toEqual({ hours: 0, governing: 'Crankshaft C-1: events' })
  })
})

describe('a plan cut off by the solver time limit', () => {
  it('has an early rebuild moved to just before the engine next runs, where every rule still holds', async () => {
    const { laterRebuilds } = await import('../../shared/domain/allocation')
    // E1 (due now, 10 h fresh) runs only round 3; a rebuild before round 1 becomes one before round 3.
    const input: AllocationInput = { now: NOW, events: [R1, R2, R3], entries: [{ id: 31, eventId: 3, chassis: 'A', plannedSeconds: 3 * H }], engines: [engine(1, 0, 10)], capacity: weeksOpen(1) }
    expect(laterRebuilds(input, { assignments: [{ entryId: 31, engineId: 1 }], rebuilds: [{ engineId: 1, beforeEventId: 1 }] }).rebuilds).toEqual([{ engineId: 1, beforeEventId: 3 }])
    // With no room in round 3's week it stays where it was.
    const full = { ...input, capacity: { ...input.capacity, [rebuildWeek(R3)]: 0 } }
    expect(laterRebuilds(full, { assignments: [{ entryId: 31, engineId: 1 }], rebuilds: [{ engineId: 1, beforeEventId: 1 }] }).rebuilds).toEqual([{ engineId: 1, beforeEventId: 1 }])
  })
})
