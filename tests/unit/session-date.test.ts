// A session's start against its event's dates. The thresholds (1 day free, up to 7 days with a
// confirmation, refused beyond) are common practice, not a published rule; cases are hand-built.
import { describe, expect, it } from 'vitest'
import { checkSessionDate, outsideEvent } from '../../shared/domain/session-date'

const NOW = new Date('2026-12-02T12:00:00Z')
// An invented two-day event in June
const JUNE = { name: 'Harrowmere 6 Hours', startsAt: '2026-06-12T09:00:00Z', endsAt: '2026-06-14T19:00:00Z' }

describe('checkSessionDate', () => {
  it('accepts a session inside the event, and up to a day either side of it', () => {
    expect(checkSessionDate('2026-06-13T10:00:00Z', JUNE, NOW)).toEqual({ verdict: 'ok' })
    expect(checkSessionDate('2026-06-11T09:00:00Z', JUNE, NOW)).toEqual({ verdict: 'ok' }) // exactly 24 h before
    expect(checkSessionDate('2026-06-15T18:00:00Z', JUNE, NOW)).toEqual({ verdict: 'ok' }) // 23 h after
  })

  it('asks for a confirmation a few days outside the event, naming the field, the event and its dates', () => {
    const v = checkSessionDate('2026-06-17T19:00:00Z', JUNE, NOW)
    expect(v.verdict).toBe('confirm')
    if (v.verdict !== 'confirm') return
    expect(v.daysOutside).toBe(3) // 19:00 on the 14th to 19:00 on the 17th
    expect(v.message).toBe('startedAt: 2026-06-17 is 3 days after Harrowmere 6 Hours (2026-06-12 to 2026-06-14); check the date and the event, and confirm (confirmDate) to file it anyway')
    const before = checkSessionDate('2026-06-08T21:00:00Z', JUNE, NOW)
    expect(before.verdict).toBe('confirm')
    if (before.verdict === 'confirm') expect(before.daysOutside).toBe(3.5)
  })

  it('refuses a session more than seven days from the event: a December session under a June event', () => {
    const v = checkSessionDate('2026-12-02T10:00:00Z', JUNE, NOW)
    expect(v.verdict).toBe('refuse')
    if (v.verdict === 'refuse') expect(v.message).toMatch(/^startedAt: 2026-12-02 is 170\.6 days after Harrowmere 6 Hours \(2026-06-12 to 2026-06-14\); .*cannot belong to it/)
    expect(checkSessionDate('2026-06-21T19:00:00Z', JUNE, NOW).verdict).toBe('confirm') // exactly 7 days
    expect(checkSessionDate('2026-06-21T19:00:01Z', JUNE, NOW).verdict).toBe('refuse')
  })

  it('refuses a start more than an hour in the future, with or without an event', () => {
    expect(checkSessionDate('2026-12-02T12:59:59Z', null, NOW)).toEqual({ verdict: 'ok' })
    const v = checkSessionDate('2026-12-02T13:00:01Z', null, NOW)
    expect(v.verdict).toBe('refuse')
    if (v.verdict === 'refuse') expect(v.message).toMatch(/^startedAt: .* is in the future/)
  })

  it('accepts any past start without an event', () => {
    expect(checkSessionDate('2021-01-01T00:00:00Z', null, NOW)).toEqual({ verdict: 'ok' })
  })

  it('measures the distance outside the event in milliseconds, signed', () => {
    expect(outsideEvent(Date.parse('2026-06-13T00:00:00Z'), JUNE)).toBe(0)
    expect(outsideEvent(Date.parse('2026-06-12T08:00:00Z'), JUNE)).toBe(-3_600_000)
    expect(outsideEvent(Date.parse('2026-06-14T21:00:00Z'), JUNE)).toBe(7_200_000)
  })
})
