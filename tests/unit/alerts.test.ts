// Alert findings and their grouping, mail text, retry backoff and schedule validation: pure parts of the alert jobs.
import { describe, expect, it } from 'vitest'
import { renderDigestMail, renderUrgentMail, type MailAlert } from '../../tasks/alert-mail'
import { backoffMinutes, MAX_BACKOFF_MINUTES } from '../../tasks/deliver-outbox'
import { groupFindings, lifeFindings, type FleetLifeView } from '../../tasks/life-check'
import { scheduleProblem, assertValidSchedule } from '../../tasks/schedule'
import { deliveryWanted, emailWanted, mailModes } from '#shared/schemas/alerts'
import { describeAlertGroup } from '#shared/domain/alert-groups'

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

describe('one alert per engine and cause', () => {
  // Three band-C over-revs on one V8: the eight rods and the valve springs demand an immediate inspection,
  // and each is over its band-C budget (one event allowed), the crank within its own (two allowed).
  const rods = Array.from({ length: 8 }, (_, i) =>
    makePart({
      componentId: 100 + i, serial: `KV8ROD-40${10 + i}`, position: `rod-${i + 1}`, positionLabel: `Conrod ${i + 1}`, category: 'Crank drive', status: 'over', fraction: 3,
      governing: { kind: 'over-rev', label: 'Over-revs in band C', unit: 'events', used: 3, limit: 1, fraction: 3, left: -2 }, immediateInspection: true,
    }),
  )
  const springs = makePart({
    componentId: 200, serial: 'KV8VSP-2001', position: 'valve-springs', positionLabel: 'Valve springs', typeName: 'Valve spring set', category: 'Valve train', status: 'over', fraction: 3,
    governing: { kind: 'over-rev', label: 'Over-revs in band C', unit: 'events', used: 3, limit: 1, fraction: 3, left: -2 }, immediateInspection: true,
  })
  const engine = makeEngine({ parts: [...rods, springs] })
  const partCycles = { installationOf: new Map([...rods, springs].map((p, i) => [p.componentId, 500 + i])), inspectionClearedAt: new Map<number, string | null>() }

  it('turns eighteen part findings into three alerts: the over-rev verdict and each part group\'s limit', () => {
    const findings = lifeFindings(lifeOf(engine), partCycles)
    expect(findings).toHaveLength(18)
    const groups = groupFindings(findings)
    expect(groups.map((g) => [g.cause, g.level, g.items.length])).toEqual([
      ['life:Crank drive', 'over', 8],
      ['over-rev', 'inspection', 9],
      ['life:Valve train', 'over', 1],
    ])
    // each finding keeps its own key, so a part is never recorded twice
    expect(groups[1]!.items[0]!.key).toBe('component:100:over-rev:inspection:i500:0')
  })

  it('names the group, the count and the worst fraction; a single part by name', () => {
    const parts = rods.map((p: any) => ({ serial: p.serial, name: p.typeName, position: p.positionLabel, fraction: p.fraction, governingLabel: 'Over-revs in band C' }))
    const life = describeAlertGroup({ kind: 'life-over', level: 'over', engineSerial: 'KV8-1101', causeLabel: 'Crank drive', single: { title: 'x', message: 'x' } }, parts)
    expect(life.title).toBe('KV8-1101 crank drive – limit reached: 8 parts, worst 300 %')
    // the parts themselves are listed beside the message (page) or under it (mail)
    expect(life.message).toBe('8 parts of the crank drive group in KV8-1101 have reached a life limit (over-revs in band c): the engine must not run until they are replaced or released by the supplier.')
    const one = describeAlertGroup({ kind: 'life-due', level: 'due', engineSerial: 'KV8-1101', causeLabel: 'Crank drive', single: { title: 'x', message: 'x' } }, [{ ...parts[0]!, fraction: 0.92, governingLabel: 'Running hours' }])
    expect(one.title).toBe('KV8-1101 crank drive – rebuild due: conrod 1 KV8ROD-4010 at 92 %')
    const rev = describeAlertGroup({ kind: 'over-rev', level: 'inspection', engineSerial: 'KV8-1101', causeLabel: 'Over-rev', single: { title: 'x', message: 'x' } }, parts)
    expect(rev.title).toBe('KV8-1101 over-rev – immediate inspection of 8 parts')
    expect(rev.message).toBe('KV8-1101 has logged an over-rev in the band that demands an immediate inspection of 8 parts: do not run the engine until they have been inspected and signed off.')
    // an alert about no part (forecast, oil) keeps the finding's own words
    expect(describeAlertGroup({ kind: 'forecast', level: 'forecast', engineSerial: 'KV8-1101', causeLabel: 'Forecast for Round 5', single: { title: 'T', message: 'M' } }, [])).toEqual({ title: 'T', message: 'M' })
  })
})

describe('alert mail', () => {
  const over: MailAlert = {
    alertId: 41, engineId: 3, engineSerial: 'KV8-1101', teamName: 'A & B <Racing>', level: 'over', title: 'KV8-1101 crank drive – limit reached: 2 parts, worst 103 %',
    message: 'Two rods at their limit.', change: 'new', partsAdded: 2, event: null,
    parts: [
      { serial: 'KV8ROD-4003', name: 'Connecting rod', position: 'Conrod 3', fraction: 1.03, governing: { label: 'Running hours', used: 41.2, limit: 40, unit: 'h', fraction: 1.03 } },
      { serial: 'KV8ROD-4004', name: 'Connecting rod', position: 'Conrod 4', fraction: 1.01, governing: { label: 'Running hours', used: 40.4, limit: 40, unit: 'h', fraction: 1.01 } },
    ],
  }
  const forecast: MailAlert = {
    alertId: 42, engineId: 5, engineSerial: 'KV8-1102', teamName: null, level: 'forecast', title: 'KV8-1102 forecast to reach a limit by Round 5', message: 'Rebuild before Round 5.',
    change: 'added', partsAdded: 1, event: { eventId: 1, name: 'Round 5', startsAt: '2026-12-20T08:00:00.000Z' }, parts: [],
  }

  it('digests every change for one person by engine, most severe first, with the parts, links and the caution, and escapes HTML', () => {
    const m = renderDigestMail([forecast, over], 'https://ledger.example/')
    expect(m.subject).toBe('[Crankledger] Alert digest: 2 alerts on KV8-1101, KV8-1102')
    expect(m.text.indexOf('KV8-1101 (A & B <Racing>) – https://ledger.example/engines/3')).toBeLessThan(m.text.indexOf('KV8-1102 – https://ledger.example/engines/5'))
    expect(m.text).toContain('[Do not run] KV8-1101 crank drive – limit reached: 2 parts, worst 103 % (New)')
    expect(m.text).toContain('  - Conrod 3 KV8ROD-4003 – 103 % consumed – Running hours: 41.2 of 40.0 h')
    expect(m.text).toContain('[Forecast] KV8-1102 forecast to reach a limit by Round 5 (1 more part)')
    expect(m.text).toContain('  Event: Round 5 (2026-12-20)')
    expect(m.text).toContain('Open: https://ledger.example/alerts?engine=3')
    expect(m.text).toContain('never a substitute')
    expect(m.html).toContain('href="https://ledger.example/alerts?engine=3"')
    expect(m.html).toContain('A &amp; B &lt;Racing&gt;')
    expect(m.html).not.toContain('<Racing>')
  })

  it('sends "do not run" at once with the level first in the subject', () => {
    const m = renderUrgentMail([over], 'https://ledger.example')
    expect(m.subject).toBe('[Crankledger] DO NOT RUN: KV8-1101 crank drive – limit reached: 2 parts, worst 103 %')
    expect(m.text).toContain('Open the engine: https://ledger.example/engines/3')
    expect(m.text).toContain('never a substitute')
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
  it('mails a digest and the urgent levels at once unless switched off', () => {
    expect(mailModes(null)).toEqual({ digest: true, immediate: true })
    expect(deliveryWanted(null, 'life-over', 'over')).toEqual({ digest: true, immediate: true })
    expect(deliveryWanted(null, 'over-rev', 'inspection')).toEqual({ digest: true, immediate: true })
    expect(deliveryWanted(null, 'life-due', 'due')).toEqual({ digest: true, immediate: false })
    expect(deliveryWanted({ immediate: false }, 'life-over', 'over')).toEqual({ digest: true, immediate: false })
    expect(deliveryWanted({ digest: false }, 'life-over', 'over')).toEqual({ digest: false, immediate: true })
    expect(deliveryWanted({ email: { 'life-over': false } }, 'life-over', 'over')).toEqual({ digest: false, immediate: false })
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
