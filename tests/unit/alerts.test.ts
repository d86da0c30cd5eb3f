// Alert findings, mail text, retry backoff and schedule validation: pure parts of the alert jobs.
import { describe, expect, it } from 'vitest'
import { renderAlertMail } from '../../tasks/alert-mail'
import { backoffMinutes, MAX_BACKOFF_MINUTES } from '../../tasks/deliver-outbox'
import { lifeFindings, type FleetLifeView } from '../../tasks/life-check'
import { scheduleProblem, assertValidSchedule } from '../../tasks/schedule'
import { emailWanted } from '#shared/schemas/alerts'

function makePart(over: Record<string, unknown> = {}): any {
  return {
    componentId: 7, serial: 'KV8ROD-4003', position: 'rod-1', positionLabel: 'Conrod', componentTypeId: 2, typeName: 'Connecting rod', category: 'crank',
    status: 'ok', fraction: 0.5, governing: { kind: 'hours', label: 'Running hours', unit: 'h', used: 20, limit: 40, fraction: 0.5, left: 20 }, measures: [],
    hours: 20, km: 0, eqHours: 0, overRevCounts: {}, immediateInspection: false, warningAt: null, dueAt: null, limitAt: null, assumedDuty: false, ...over,
  }
}
function makeEngine(over: Record<string, unknown> = {}): any {
  return {
    id: 3, serial: 'KV8-1101', engineTypeCode: 'KV8', status: 'active', supplierId: 1, teamId: 2, teamName: 'Team A', rebuiltAt: null,
    parts: [makePart()], canFinish: [], ...over,
  }
}
const cycles = { installationOf: new Map([[7, 55]]), inspectionClearedAt: new Map<number, string | null>() }
const lifeOf = (...engines: any[]): FleetLifeView => ({ engines })

describe('life findings', () => {
  it('finds nothing for a part below its warning level', () => {
    expect(lifeFindings(lifeOf(makeEngine()), cycles)).toEqual([])
  })

  it('keys a level by part, level and installation, so each level alerts once per cycle', () => {
    const due = makePart({ status: 'due', fraction: 0.92, governing: { kind: 'hours', label: 'Running hours', unit: 'h', used: 36.8, limit: 40, fraction: 0.92, left: 3.2 } })
    const [f] = lifeFindings(lifeOf(makeEngine({ parts: [due] })), cycles)
    expect(f!.key).toBe('component:7:life:due:i55')
    expect(f!.kind).toBe('life-due')
    expect(f!.title).toBe('KV8-1101 conrod KV8ROD-4003 at 92 % (rebuild due) – running hours')
    // A new installation is a new cycle.
    const [g] = lifeFindings(lifeOf(makeEngine({ parts: [due] })), { ...cycles, installationOf: new Map([[7, 56]]) })
    expect(g!.key).toBe('component:7:life:due:i56')
  })

  it('raises the over-rev inspection and the forecast for the next assigned event only', () => {
    const p = makePart({ immediateInspection: true })
    const e = makeEngine({
      parts: [p],
      rebuiltAt: '2026-05-01T00:00:00.000Z',
      canFinish: [
        { eventId: 10, name: 'Round 4', startsAt: '2026-12-10T08:00:00.000Z', ok: false, worstFraction: 1.2, governingPartId: 7, reason: 'projected-over', assigned: false, chassis: null },
        { eventId: 11, name: 'Round 5', startsAt: '2026-12-20T08:00:00.000Z', ok: false, worstFraction: 1.3, governingPartId: 7, reason: 'projected-over', assigned: true, chassis: 'C1' },
      ],
    })
    const found = lifeFindings(lifeOf(e), cycles)
    expect(found.map((f) => f.key)).toEqual(['component:7:over-rev:inspection:i55:0', `engine:3:forecast:11:r${Date.parse('2026-05-01T00:00:00.000Z')}`])
    expect(found[1]!.details.event!.name).toBe('Round 5')
  })

  it('leaves engines in teardown or retired alone', () => {
    const over = makePart({ status: 'over', fraction: 1.1 })
    expect(lifeFindings(lifeOf(makeEngine({ status: 'teardown', parts: [over] }), makeEngine({ status: 'retired', parts: [over] })), cycles)).toEqual([])
  })
})

describe('alert mail', () => {
  it('names engine, part, governing limit, consumed fraction, a link and the caution, and escapes HTML', () => {
    const m = renderAlertMail('KV8-1101 conrod KV8ROD-4003 at 92 % (rebuild due) – running hours', {
      engineSerial: 'KV8-1101', engineTypeCode: 'KV8', teamName: 'A & B <Racing>', partSerial: 'KV8ROD-4003', partName: 'Connecting rod', position: 'Conrod',
      status: 'rebuild due', fraction: 0.92, governing: { label: 'Running hours', used: 36.8, limit: 40, unit: 'h', fraction: 0.92 }, event: { eventId: 1, name: 'Round 5', startsAt: '2026-12-20T08:00:00.000Z' }, message: 'Due.',
    }, 3, 'https://ledger.example/')
    expect(m.subject).toBe('[Crankledger] KV8-1101 conrod KV8ROD-4003 at 92 % (rebuild due) – running hours')
    expect(m.text).toContain('Governing limit: Running hours: 36.8 of 40.0 h')
    expect(m.text).toContain('Life consumed: 92 %')
    expect(m.text).toContain('Forecast event: Round 5 (2026-12-20)')
    expect(m.text).toContain('https://ledger.example/engines/3')
    expect(m.text).toContain('never a substitute')
    expect(m.html).toContain('A &amp; B &lt;Racing&gt;')
    expect(m.html).not.toContain('<Racing>')
  })
})

describe('retry backoff', () => {
  it('doubles from one minute and stops at the cap', () => {
    expect([1, 2, 3, 4, 5, 6, 7, 8].map(backoffMinutes)).toEqual([1, 2, 4, 8, 16, 32, 60, 60])
    expect(MAX_BACKOFF_MINUTES).toBe(60)
  })
})

describe('alert preferences', () => {
  it('sends a kind unless the user switched it off', () => {
    expect(emailWanted(null, 'life-due')).toBe(true)
    expect(emailWanted({ email: { 'life-due': false } }, 'life-due')).toBe(false)
    expect(emailWanted({ email: { 'life-due': false } }, 'life-over')).toBe(true)
  })
})

describe('schedule validation', () => {
  it('accepts five- and six-field cron expressions', () => {
    expect(scheduleProblem('*/15 * * * *')).toBeNull()
    expect(scheduleProblem('0 */5 * * * *')).toBeNull()
    expect(assertValidSchedule(' 0 6 * * 1-5 ')).toBe('0 6 * * 1-5')
  })
  it('refuses a bad expression with a message naming the setting', () => {
    expect(scheduleProblem('not a cron')).toMatch(/^alertSchedule \(NUXT_ALERT_SCHEDULE\) "not a cron" is not a valid cron expression/)
    expect(scheduleProblem('61 * * * *')).toMatch(/not a valid cron expression/)
    expect(scheduleProblem('')).toMatch(/is empty/)
    expect(() => assertValidSchedule('* * *')).toThrow(/NUXT_ALERT_SCHEDULE/)
  })
})
