import { describe, expect, it } from 'vitest'
import { compareFleets, duePoint, NO_TEAM, summarisePreview, type PreviewEngine, type PreviewFleet, type PreviewPart } from '../../shared/domain/limit-preview'
import { emptyUsage, evaluatePartLife } from '../../shared/domain/life'
import { makeLifeConfig, makeLimits } from '../../db/fixtures'

// Hand-built fleets (invented serials and teams); the expected figures are worked out in the comments.
const EVENTS = [
  { eventId: 1, name: 'Round 4', startsAt: '2027-03-01T09:00:00.000Z' },
  { eventId: 2, name: 'Round 5', startsAt: '2027-04-01T09:00:00.000Z' },
]

function part(componentId: number, over: Partial<PreviewPart> = {}): PreviewPart {
  return { componentId, serial: `PX-${componentId}`, typeName: 'Conrod', status: 'ok', fraction: 0.2, governing: { label: 'Equivalent hours' }, measures: [], dueAt: null, ...over }
}

function engine(id: number, parts: PreviewPart[], finish: [boolean, boolean] = [true, true], team: [number | null, string | null] = [7, 'Team Quillon']): PreviewEngine {
  return {
    id,
    serial: `EX-${id}`,
    teamId: team[0],
    teamName: team[1],
    parts,
    canFinish: EVENTS.map((e, i) => ({ ...e, ok: finish[i]!, reason: finish[i] ? null : 'projected-over' })),
  }
}

function clone(f: PreviewFleet): PreviewFleet {
  return structuredClone(f)
}

describe('comparing the fleet before and after a limit change', () => {
  const before: PreviewFleet = {
    engines: [
      engine(1, [part(11, { fraction: 0.5, measures: [{ unit: 'eq. h', left: 10 }], dueAt: { eventId: 2, name: 'Round 5' } }), part(12, { measures: [{ unit: 'h', left: 5 }, { unit: 'events', left: 3 }] })]),
      engine(2, [part(21, { fraction: 0.3 })], [true, true], [null, null]),
    ],
    looseParts: [part(31, { status: 'warning', fraction: 0.85 })],
  }
  const after = clone(before)
  // Engine 1: part 11 goes from ok at 0.5 to warning at 0.85, due already at round 4, and the engine can no longer finish round 5.
  Object.assign(after.engines[0]!.parts[0]!, { status: 'warning', fraction: 0.85, measures: [{ unit: 'eq. h', left: 3 }], dueAt: { eventId: 1, name: 'Round 4' }, governing: { label: 'Equivalent hours' } })
  after.engines[0]!.canFinish[1] = { ...after.engines[0]!.canFinish[1]!, ok: false, reason: 'projected-over' }
  // The shelf part moves from warning to due.
  Object.assign(after.looseParts[0]!, { status: 'due', fraction: 0.95 })

  const r = compareFleets(before, after)

  it('lists the parts whose status changes, in engines and on the shelf', () => {
    expect(r.statusChanges.map((c) => [c.serial, c.before, c.after, c.engineSerial ?? null])).toEqual([
      ['PX-31', 'warning', 'due', null],
      ['PX-11', 'ok', 'warning', 'EX-1'],
    ])
    expect(r.statusChanges[1]!.fractionAfter).toBe(0.85)
  })

  it('names the engine and event pairs that can no longer be finished', () => {
    expect(r.cannotFinish).toEqual([{ engineId: 1, engineSerial: 'EX-1', teamId: 7, teamName: 'Team Quillon', eventId: 2, eventName: 'Round 5', startsAt: EVENTS[1]!.startsAt, reason: 'projected-over' }])
    expect(r.canFinishNow).toEqual([])
  })

  it('finds the engine that comes due before the teardown today\'s limits plan for it', () => {
    expect(r.dueEarlier).toHaveLength(1)
    expect(r.dueEarlier[0]!.before).toEqual({ at: 'event', eventId: 2, name: 'Round 5', startsAt: EVENTS[1]!.startsAt })
    expect(r.dueEarlier[0]!.after).toEqual({ at: 'event', eventId: 1, name: 'Round 4', startsAt: EVENTS[0]!.startsAt })
    expect(r.dueLater).toEqual([])
  })

  it('sums remaining life per team: part-lives and the amounts left by unit', () => {
    // Team Quillon: parts 11 and 12. Before (1 - 0.5) + (1 - 0.2) = 1.3, after (1 - 0.85) + 0.8 = 0.95.
    const q = r.teams.find((t) => t.teamId === 7)!
    expect(q.parts).toBe(2)
    expect(q.partLivesBefore).toBeCloseTo(1.3, 12)
    expect(q.partLivesAfter).toBeCloseTo(0.95, 12)
    expect(q.leftBefore).toEqual({ h: 5, km: 0, 'eq. h': 10 })
    expect(q.leftAfter).toEqual({ h: 5, km: 0, 'eq. h': 3 })
    // Engine 2 (no team) and the shelf part share the supplier's group: before 0.7 + 0.15 = 0.85, after 0.7 + 0.05 = 0.75.
    const stock = r.teams.find((t) => t.teamId === null)!
    expect(stock.teamName).toBe(NO_TEAM)
    expect(stock.partLivesBefore).toBeCloseTo(0.85, 12)
    expect(stock.partLivesAfter).toBeCloseTo(0.75, 12)
    expect(r.teams.map((t) => t.teamName)).toEqual(['Team Quillon', NO_TEAM])
  })

  it('summarises the counts and the difference per team', () => {
    expect(summarisePreview(r)).toEqual({
      statusChanges: 2,
      cannotFinish: 1,
      canFinishNow: 0,
      dueEarlier: 1,
      dueLater: 0,
      teams: [{ teamId: 7, teamName: 'Team Quillon', partLivesDifference: -0.35 }, { teamId: null, teamName: NO_TEAM, partLivesDifference: -0.1 }],
    })
  })

  it('previews no change when nothing moves', () => {
    const same = compareFleets(before, clone(before))
    expect(same.statusChanges).toEqual([])
    expect(same.cannotFinish).toEqual([])
    expect(same.canFinishNow).toEqual([])
    expect(same.dueEarlier).toEqual([])
    expect(same.dueLater).toEqual([])
    expect(summarisePreview(same).teams.every((t) => t.partLivesDifference === 0)).toBe(true)
  })

  it('counts a part already due as due now, earlier than any event', () => {
    expect(duePoint(engine(9, [part(91, { status: 'due', fraction: 0.95 })]))).toEqual({ at: 'now' })
    expect(duePoint(engine(9, [part(91)]))).toEqual({ at: 'none' })
    const relaxed = compareFleets({ engines: [engine(9, [part(91, { status: 'due', fraction: 0.95 })])], looseParts: [] }, { engines: [engine(9, [part(91, { status: 'warning', fraction: 0.95 })])], looseParts: [] })
    expect(relaxed.dueLater.map((d) => [d.before.at, d.after.at])).toEqual([['now', 'none']])
  })

  it('refuses fleets that do not match (a caller\'s error, never a silent gap)', () => {
    expect(() => compareFleets(before, { engines: [], looseParts: [] })).toThrow(/engine 1 is missing/)
  })
})

describe('a warning level moved through the life engine', () => {
  it('turns a part at 8 h of a 10 h limit from ok to warning when the warning level drops from 85 % to 75 %', () => {
    const cfg = makeLifeConfig({ referenceRpm: 8000 })
    const usage = { ...emptyUsage(), hours: 8 }
    const limits = makeLimits({ hours: 10, km: null, eqHours: null, overRevEvents: {}, warningLevel: 0.85, dueLevel: 0.95 })
    const toPart = (status: PreviewPart['status'], fraction: number) => part(1, { status, fraction })
    const a = evaluatePartLife(usage, limits, cfg)
    const b = evaluatePartLife(usage, { ...limits, warningLevel: 0.75 }, cfg)
    // 8 / 10 = 0.8: below 0.85, at or above 0.75
    const r = compareFleets({ engines: [engine(1, [toPart(a.status, a.fraction)])], looseParts: [] }, { engines: [engine(1, [toPart(b.status, b.fraction)])], looseParts: [] })
    expect(r.statusChanges.map((c) => [c.before, c.after, c.fractionAfter])).toEqual([['ok', 'warning', 0.8]])
  })
})
