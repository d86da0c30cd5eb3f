// Statement arithmetic against cases worked by hand (the working is written beside each amount).
// The pricing scheme is common practice in customer racing; no published source.
import { describe, expect, it } from 'vitest'
import { formatMinor, isCurrencyCode, minorDigits, mulDivRound } from '../../shared/domain/billing/money'
import { adjustmentLines, contractFor, statementLines, statementTotals, type LeaseTerms, type LedgerSession, type StatementInput } from '../../shared/domain/billing/statement'

const kmContract: LeaseTerms = {
  id: 1,
  engineId: null,
  engineTypeId: 7,
  validFrom: '2026-03-01',
  validTo: '2026-10-31',
  currency: 'EUR',
  feeBasis: 'event',
  feeMinor: 800_000,
  allowanceUnit: 'km',
  allowance: 1000,
  overageRateMinor: 250,
  rebuildCharges: { failure: 1_500_000, 'life due': 0 },
  overRevCharges: { B3: 250_000 },
  damageCharges: { scrap: 420_000 },
  taxRateBp: 2000,
}

function session(id: number, startedAt: string, km: number, extra: Partial<LedgerSession> = {}): LedgerSession {
  return { id, engineId: 11, engineTypeId: 7, engineSerial: 'XT-0011', startedAt, runningMs: 3_600_000, distanceM: Math.round(km * 1000), eventId: null, eventName: null, overRevs: [], ...extra }
}

const MAY = { from: '2026-05-01T00:00:00.000Z', to: '2026-06-01T00:00:00.000Z' }

function mayInput(extraSessions: LedgerSession[] = []): StatementInput {
  return {
    period: MAY,
    contracts: [kmContract],
    sessions: [
      // April: 950 km already run under the contract
      session(1, '2026-04-10T10:00:00.000Z', 950),
      ...extraSessions,
      session(2, '2026-05-09T10:00:00.000Z', 80, { eventId: 5, eventName: 'Round 3' }),
      session(3, '2026-05-10T10:00:00.000Z', 40.5, { eventId: 5, eventName: 'Round 3', overRevs: [{ bandId: 'B3', peakRpm: 9710, startS: 1234.5 }, { bandId: 'B1', peakRpm: 9420, startS: 1500 }] }),
    ],
    teardowns: [{ id: 21, engineId: 11, engineTypeId: 7, engineSerial: 'XT-0011', openedAt: '2026-05-20T08:00:00.000Z', reason: 'failure' }],
    findings: [],
    seasonFeesBilled: [],
  }
}

describe('money in minor units', () => {
  it('rounds a product and quotient halves away from zero, exactly beyond 2^53', () => {
    expect(mulDivRound(1_236, 1_250, 10_000)).toBe(155) // 154.5 -> 155
    expect(mulDivRound(1_234, 1_250, 10_000)).toBe(154) // 154.25 -> 154
    expect(mulDivRound(-1_236, 1_250, 10_000)).toBe(-155) // a credit rounds the same way
    // 9e15 ms x 9 / 3 = 2.7e16, beyond what a double holds exactly at unit precision
    expect(mulDivRound(9_000_000_000_000_001, 9, 3)).toBe(27_000_000_000_000_003)
  })

  it('knows ISO 4217 codes and their minor units', () => {
    expect(isCurrencyCode('EUR')).toBe(true)
    expect(isCurrencyCode('GBP')).toBe(true)
    expect(isCurrencyCode('EURO')).toBe(false)
    expect(isCurrencyCode('ABC')).toBe(false)
    expect(isCurrencyCode('eur')).toBe(false)
    // ISO 4217 minor units: EUR 2, JPY 0, BHD 3 (from memory)
    expect(minorDigits('EUR')).toBe(2)
    expect(minorDigits('JPY')).toBe(0)
    expect(minorDigits('BHD')).toBe(3)
    expect(formatMinor(3_081_150, 'EUR')).toBe('30,811.50')
    expect(formatMinor(-5, 'EUR')).toBe('-0.05')
  })
})

describe('a month under a km contract', () => {
  const lines = statementLines(mayInput())
  const byKey = Object.fromEntries(lines.map((l) => [l.key, l]))

  it('charges one event fee for two sessions at the same event', () => {
    expect(byKey['fee:event:5:11']!.amountMinor).toBe(800_000)
    expect(byKey['fee:event:5:11']!.evidence.sessionIds).toEqual([2, 3])
  })

  it('charges only the part of the session that crosses the allowance', () => {
    // 950 km before; session 2 runs 80 km: 1030 - 1000 = 30 km beyond, x 250 = 7,500
    expect(byKey['usage:session:2']!.amountMinor).toBe(7_500)
    expect(byKey['usage:session:2']!.quantity).toBe(30)
    expect(byKey['usage:session:2']!.evidence).toMatchObject({ usedBefore: 950_000, usedAfter: 1_030_000 })
    // session 3 is wholly beyond: 40.5 km x 250 = 10,125
    expect(byKey['usage:session:3']!.amountMinor).toBe(10_125)
    // the April session is not on the May statement
    expect(byKey['usage:session:1']).toBeUndefined()
  })

  it('charges an over-rev by the band stored on the event, and a rebuild by its reason', () => {
    expect(byKey['over-rev:3:0']!.amountMinor).toBe(250_000)
    expect(byKey['over-rev:3:0']!.evidence.overRev).toEqual({ sessionId: 3, bandId: 'B3', peakRpm: 9710, startS: 1234.5 })
    expect(byKey['over-rev:3:1']).toBeUndefined() // B1 carries no charge in this contract
    expect(byKey['rebuild:21']!.amountMinor).toBe(1_500_000)
  })

  it('totals with tax at 20 %', () => {
    // 800,000 + 7,500 + 10,125 + 250,000 + 1,500,000 = 2,567,625; tax 20 % = 513,525; total 3,081,150
    expect(statementTotals(lines)).toMatchObject({ subtotalMinor: 2_567_625, taxMinor: 513_525, totalMinor: 3_081_150 })
  })

  it('charges a finding the supplier marked as the team\'s, with its photos as evidence', () => {
    const input = mayInput()
    input.findings = [{ id: 31, teardownId: 21, engineId: 11, engineTypeId: 7, engineSerial: 'XT-0011', openedAt: '2026-05-20T08:00:00.000Z', partSerial: 'CR-77', disposition: 'scrap', photoIds: [4, 5] }]
    const damage = statementLines(input).find((l) => l.key === 'damage:31')!
    expect(damage.amountMinor).toBe(420_000)
    expect(damage.evidence.photoIds).toEqual([4, 5])
  })
})

describe('a running-hour contract', () => {
  it('charges the hours beyond the allowance at the hourly rate', () => {
    const hours: LeaseTerms = { ...kmContract, id: 2, engineId: 11, allowanceUnit: 'h', allowance: 10, overageRateMinor: 40_000, feeMinor: 0 }
    const input: StatementInput = {
      period: MAY,
      contracts: [kmContract, hours],
      sessions: [session(1, '2026-04-10T10:00:00.000Z', 0, { runningMs: 34_200_000 }), session(2, '2026-05-03T10:00:00.000Z', 0, { runningMs: 3_690_000 })],
      teardowns: [],
      findings: [],
      seasonFeesBilled: [],
    }
    // the engine's own contract wins over its type's
    expect(contractFor(input.contracts, 11, 7, '2026-05-03T10:00:00.000Z')!.id).toBe(2)
    // 9.5 h before, 1.025 h run: 0.525 h beyond = 1,890,000 ms; x 40,000 / 3,600,000 = 21,000
    const [line] = statementLines(input)
    expect(line!.amountMinor).toBe(21_000)
    expect(line!.quantity).toBe(0.525)
  })
})

describe('tax rounding in minor units', () => {
  it('rounds once per rate, halves away from zero', () => {
    // 12.5 % of 1,236 = 154.5 -> 155; 20 % of 1,001 = 200.2 -> 200; total tax 355
    const t = statementTotals([{ amountMinor: 1_236, taxRateBp: 1250 }, { amountMinor: 1_000, taxRateBp: 2000 }, { amountMinor: 1, taxRateBp: 2000 }])
    expect(t.taxByRate).toEqual([{ rateBp: 1250, baseMinor: 1_236, taxMinor: 155 }, { rateBp: 2000, baseMinor: 1_001, taxMinor: 200 }])
    expect(t).toMatchObject({ subtotalMinor: 2_237, taxMinor: 355, totalMinor: 2_592 })
  })

  it('rounds a credit the same way', () => {
    expect(statementTotals([{ amountMinor: -1_236, taxRateBp: 1250 }])).toMatchObject({ taxMinor: -155, totalMinor: -1_391 })
  })
})

describe('a session that reaches the ledger after its statement was issued', () => {
  it('becomes a debit on the next statement, and a later re-processing a credit', () => {
    // Issued May statement as billed: session 2 crossed the allowance (7,500), session 3 wholly beyond (10,125).
    const issuedLines = statementLines(mayInput())
    const billed = new Map(issuedLines.map((l) => [l.key, { amountMinor: l.amountMinor, taxRateBp: l.taxRateBp, description: l.description }]))
    // A 20 km session of 2 May is imported late: 950 + 20 = 970 km, within the allowance, so
    // session 2 now crosses later: 970 + 80 = 1,050 -> 50 km beyond = 12,500 (was 7,500): debit 5,000.
    const late = session(9, '2026-05-02T10:00:00.000Z', 20)
    const adj = adjustmentLines({ statementId: 40, number: 'KB-2026-0004', billed }, statementLines(mayInput([late])))
    expect(adj.map((l) => [l.key, l.amountMinor])).toEqual([['adjust:40:usage:session:2', 5_000]])
    expect(adj[0]!.description).toContain('Debit on KB-2026-0004')
    expect(adj[0]!.adjustsStatementId).toBe(40)
    // Next month's statement carries it: 5,000 + 20 % tax 1,000 = 6,000
    expect(statementTotals(adj)).toMatchObject({ subtotalMinor: 5_000, taxMinor: 1_000, totalMinor: 6_000 })

    // Once that debit is billed, session 3 is re-processed to 30.5 km: 30.5 km x 250 = 7,625 (was 10,125): credit 2,500.
    billed.set('usage:session:2', { ...billed.get('usage:session:2')!, amountMinor: 12_500 })
    const reprocessed = mayInput([late])
    reprocessed.sessions[3] = { ...reprocessed.sessions[3]!, distanceM: 30_500 }
    const credit = adjustmentLines({ statementId: 40, number: 'KB-2026-0004', billed }, statementLines(reprocessed))
    expect(credit.map((l) => [l.key, l.amountMinor])).toEqual([['adjust:40:usage:session:3', -2_500]])
    expect(credit[0]!.description).toContain('Credit on KB-2026-0004')
  })

  it('adds nothing when the ledger is unchanged', () => {
    const lines = statementLines(mayInput())
    const billed = new Map(lines.map((l) => [l.key, { amountMinor: l.amountMinor, taxRateBp: l.taxRateBp, description: l.description }]))
    expect(adjustmentLines({ statementId: 1, number: 'X', billed }, lines)).toEqual([])
  })
})

describe('season fee', () => {
  it('is charged once per contract, on the first statement that has running under it', () => {
    const season: LeaseTerms = { ...kmContract, feeBasis: 'season', feeMinor: 9_000_000 }
    const input: StatementInput = { ...mayInput(), contracts: [season] }
    expect(statementLines(input).filter((l) => l.kind === 'fee').map((l) => l.amountMinor)).toEqual([9_000_000])
    expect(statementLines({ ...input, seasonFeesBilled: [1] }).filter((l) => l.kind === 'fee')).toEqual([])
  })
})
