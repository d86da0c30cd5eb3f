// Over-rev events keep their time-at-rpm profiles only while all of them fit the JSON budget of a
// stored session. The rule (common practice here: one row stays well under the database's packet)
// is "with profiles when the whole list fits, else the whole list without profiles"; the analyser
// applies it as events close, so that it never holds more than the budget of profiles.
import { describe, expect, it } from 'vitest'
import type { OverRevEvent } from '../../shared/domain/over-rev'
import { OverRevExcursions } from '../../shared/domain/trace/events'

const BANDS = [
  { id: 'log', label: 'Logged', minRpm: 9000, minDurationS: 0.2, hysteresisRpm: 100 },
  { id: 'inspect', label: 'Inspect', minRpm: 9300, minDurationS: 0.1, hysteresisRpm: 100 },
]

/** `n` excursions of 0.5 s each, 60 steps of 1/120 s climbing 10 rpm a step from 9,010 rpm. */
function run(n: number, budgetBytes: number) {
  const ex = new OverRevExcursions(BANDS, budgetBytes)
  for (let i = 0; i < n; i++) {
    let peak = 0
    for (let k = 0; k < 60; k++) {
      const rpm = 9010 + 10 * k
      ex.addStep(rpm, 1 / 120)
      peak = Math.max(peak, rpm)
    }
    ex.close(10 * i, 10 * i + 0.5, peak, 0)
  }
  return ex
}

/** The rule applied to the whole list at once, written out independently of the analyser. */
function wholeListRule(events: OverRevEvent[], budgetBytes: number): OverRevEvent[] {
  if (JSON.stringify(events).length <= budgetBytes) return events
  return events.map(({ profile: _profile, ...ev }) => ev)
}

describe('over-rev profiles within the stored budget', () => {
  const unlimited = run(40, Number.POSITIVE_INFINITY)
  const withProfiles = JSON.stringify(unlimited.events).length

  it('keeps every profile when the whole list fits, exactly as the whole-list rule does', () => {
    const ex = run(40, withProfiles)
    expect(ex.profilesDropped).toBe(false)
    expect(ex.events.every((e) => e.profile?.length === 60)).toBe(true)
    expect(ex.events).toEqual(wholeListRule(unlimited.events, withProfiles))
  })

  it('drops every profile, also of the events before, once one byte more would be needed', () => {
    const ex = run(40, withProfiles - 1)
    expect(ex.profilesDropped).toBe(true)
    expect(ex.events.some((e) => 'profile' in e)).toBe(false)
    expect(ex.events).toEqual(wholeListRule(unlimited.events, withProfiles - 1))
    // the verdicts stay: the time above each band is kept without the profile
    expect(ex.events.map((e) => e.bandId)).toEqual(unlimited.events.map((e) => e.bandId))
    expect(ex.events[0]!.secondsAbove).toEqual(unlimited.events[0]!.secondsAbove)
  })

  it('holds no profile past the budget while the trace goes on (memory stays bounded)', () => {
    const ex = run(2000, 20_000)
    expect(ex.profilesDropped).toBe(true)
    expect(ex.events).toHaveLength(2000)
    expect(ex.events.filter((e) => e.profile).length).toBe(0)
  })
})
