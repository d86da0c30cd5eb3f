// A lease statement from the life ledger: what one team owes for one period under its lease
// contracts, each line with the evidence behind it. Pure: the service reads the ledger and hands
// over plain rows; nothing here reads a clock, a database or the network.
//
// Pricing follows common practice in customer racing (no published source): a fee per season or
// per event entered, a running allowance per engine over the contract with a rate beyond it, a
// charge per rebuild by its reason, a charge per over-rev event by band, and a charge per finding
// the supplier marks as the team's doing. Money is integer minor units throughout.
import { mulDivRound } from './money'

export const FEE_BASES = ['season', 'event'] as const
export type FeeBasis = (typeof FEE_BASES)[number]
export const USAGE_UNITS = ['km', 'h'] as const
export type UsageUnit = (typeof USAGE_UNITS)[number]
export const LINE_KINDS = ['fee', 'usage', 'rebuild', 'over-rev', 'damage', 'adjustment'] as const
export type LineKind = (typeof LINE_KINDS)[number]

/** The terms of one lease contract, as the statement needs them. */
export interface LeaseTerms {
  id: number
  /** exactly one of engineId and engineTypeId is set; an engine's own contract wins over its type's */
  engineId: number | null
  engineTypeId: number | null
  /** calendar dates, inclusive, UTC */
  validFrom: string
  validTo: string
  currency: string
  feeBasis: FeeBasis
  feeMinor: number
  allowanceUnit: UsageUnit
  /** whole km or running hours per engine over the contract */
  allowance: number
  /** per km or per running hour beyond the allowance */
  overageRateMinor: number
  rebuildCharges: Record<string, number>
  overRevCharges: Record<string, number>
  damageCharges: Record<string, number>
  /** basis points: 2000 is 20 % */
  taxRateBp: number
}

export interface LedgerSession {
  id: number
  engineId: number
  engineTypeId: number
  engineSerial: string
  startedAt: string
  /** running time in whole milliseconds and distance in whole metres (the ledger keeps 3 decimals of s and km) */
  runningMs: number
  distanceM: number
  eventId: number | null
  eventName: string | null
  overRevs: { bandId: string; peakRpm: number; startS: number }[]
}

export interface LedgerTeardown {
  id: number
  engineId: number
  engineTypeId: number
  engineSerial: string
  openedAt: string
  reason: string
}

export interface LedgerFinding {
  id: number
  teardownId: number
  engineId: number
  engineTypeId: number
  engineSerial: string
  openedAt: string
  partSerial: string
  disposition: string
  photoIds: number[]
}

export interface LineEvidence {
  engineId?: number
  sessionIds?: number[]
  eventId?: number
  teardownId?: number
  findingId?: number
  photoIds?: number[]
  overRev?: { sessionId: number; bandId: string; peakRpm: number; startS: number }
  /** usage lines: what the engine had used under the contract before and after the session (m or ms) */
  usedBefore?: number
  usedAfter?: number
}

export interface StatementLine {
  /** stable across recomputation: how an issued line is matched with its recomputed self */
  key: string
  kind: LineKind
  contractId: number | null
  description: string
  quantity: number
  unit: string
  unitAmountMinor: number
  amountMinor: number
  taxRateBp: number
  evidence: LineEvidence
  /** adjustment lines: the issued statement they correct */
  adjustsStatementId?: number
}

export interface StatementInput {
  /** [from, to) as ISO instants */
  period: { from: string; to: string }
  contracts: LeaseTerms[]
  /** every session of the team's engines from the earliest contract start up to period.to: earlier ones count towards the allowance */
  sessions: LedgerSession[]
  teardowns: LedgerTeardown[]
  /** findings the supplier marked as charged to the team */
  findings: LedgerFinding[]
  /** contracts whose season fee an issued statement already carries */
  seasonFeesBilled: number[]
}

export interface StatementTotals {
  subtotalMinor: number
  taxMinor: number
  totalMinor: number
  /** tax per rate, each rounded once (common invoice practice) */
  taxByRate: { rateBp: number; baseMinor: number; taxMinor: number }[]
}

const dateOf = (iso: string) => iso.slice(0, 10)
const inPeriod = (at: string, p: { from: string; to: string }) => Date.parse(at) >= Date.parse(p.from) && Date.parse(at) < Date.parse(p.to)

/** The contract that prices a record of this engine at this time: the engine's own, else its type's. */
export function contractFor(contracts: LeaseTerms[], engineId: number, engineTypeId: number, at: string): LeaseTerms | undefined {
  const day = dateOf(at)
  const valid = contracts.filter((c) => c.validFrom <= day && day <= c.validTo)
  return valid.find((c) => c.engineId === engineId) ?? valid.find((c) => c.engineId === null && c.engineTypeId === engineTypeId)
}

const UNIT_SCALE: Record<UsageUnit, number> = { km: 1000, h: 3_600_000 }

function usageLines(input: StatementInput): StatementLine[] {
  const out: StatementLine[] = []
  const used = new Map<string, number>()
  const ordered = [...input.sessions].sort((a, b) => Date.parse(a.startedAt) - Date.parse(b.startedAt) || a.id - b.id)
  for (const s of ordered) {
    if (Date.parse(s.startedAt) >= Date.parse(input.period.to)) continue
    const c = contractFor(input.contracts, s.engineId, s.engineTypeId, s.startedAt)
    if (!c) continue
    const scale = UNIT_SCALE[c.allowanceUnit]
    const amount = c.allowanceUnit === 'km' ? s.distanceM : s.runningMs
    const allowance = c.allowance * scale
    const key = `${c.id}:${s.engineId}`
    const before = used.get(key) ?? 0
    const after = before + amount
    used.set(key, after)
    if (!inPeriod(s.startedAt, input.period)) continue
    // Only the part of the session beyond the allowance is charged: a session can cross it.
    const over = Math.max(0, after - allowance) - Math.max(0, before - allowance)
    const ran = (amount / scale).toFixed(3)
    out.push({
      key: `usage:session:${s.id}`,
      kind: 'usage',
      contractId: c.id,
      description: over > 0
        ? `${s.engineSerial}: ${ran} ${c.allowanceUnit} run, ${(over / scale).toFixed(3)} ${c.allowanceUnit} beyond the ${c.allowance} ${c.allowanceUnit} allowance`
        : `${s.engineSerial}: ${ran} ${c.allowanceUnit} run, within the ${c.allowance} ${c.allowanceUnit} allowance`,
      quantity: over / scale,
      unit: c.allowanceUnit,
      unitAmountMinor: c.overageRateMinor,
      amountMinor: over > 0 ? mulDivRound(over, c.overageRateMinor, scale) : 0,
      taxRateBp: c.taxRateBp,
      evidence: { engineId: s.engineId, sessionIds: [s.id], usedBefore: before, usedAfter: after },
    })
  }
  return out
}

function feeLines(input: StatementInput): StatementLine[] {
  const out: StatementLine[] = []
  const seen = new Set<string>()
  for (const s of input.sessions) {
    if (!inPeriod(s.startedAt, input.period)) continue
    const c = contractFor(input.contracts, s.engineId, s.engineTypeId, s.startedAt)
    if (!c || c.feeMinor === 0) continue
    if (c.feeBasis === 'season') {
      const key = `fee:season:${c.id}`
      if (input.seasonFeesBilled.includes(c.id) || seen.has(key)) continue
      seen.add(key)
      out.push({ key, kind: 'fee', contractId: c.id, description: `Season lease fee, ${c.validFrom} to ${c.validTo}`, quantity: 1, unit: 'season', unitAmountMinor: c.feeMinor, amountMinor: c.feeMinor, taxRateBp: c.taxRateBp, evidence: { engineId: s.engineId, sessionIds: [s.id] } })
    } else if (s.eventId !== null) {
      // One fee per event and engine entered, however many sessions it ran there.
      const key = `fee:event:${s.eventId}:${s.engineId}`
      const line = out.find((l) => l.key === key)
      if (line) {
        line.evidence.sessionIds!.push(s.id)
        continue
      }
      out.push({ key, kind: 'fee', contractId: c.id, description: `Event lease fee: ${s.eventName ?? `event ${s.eventId}`}, ${s.engineSerial}`, quantity: 1, unit: 'event', unitAmountMinor: c.feeMinor, amountMinor: c.feeMinor, taxRateBp: c.taxRateBp, evidence: { engineId: s.engineId, eventId: s.eventId, sessionIds: [s.id] } })
    }
  }
  return out
}

function overRevLines(input: StatementInput): StatementLine[] {
  const out: StatementLine[] = []
  for (const s of input.sessions) {
    if (!inPeriod(s.startedAt, input.period)) continue
    const c = contractFor(input.contracts, s.engineId, s.engineTypeId, s.startedAt)
    if (!c) continue
    s.overRevs.forEach((e, i) => {
      // The band is the one stored on the event; it is never re-sorted here by peak.
      const charge = c.overRevCharges[e.bandId]
      if (!charge) return
      out.push({
        key: `over-rev:${s.id}:${i}`,
        kind: 'over-rev',
        contractId: c.id,
        description: `${s.engineSerial}: over-rev in band ${e.bandId}, peak ${e.peakRpm} rpm at ${e.startS.toFixed(1)} s into the file`,
        quantity: 1,
        unit: 'event',
        unitAmountMinor: charge,
        amountMinor: charge,
        taxRateBp: c.taxRateBp,
        evidence: { engineId: s.engineId, sessionIds: [s.id], overRev: { sessionId: s.id, bandId: e.bandId, peakRpm: e.peakRpm, startS: e.startS } },
      })
    })
  }
  return out
}

function teardownLines(input: StatementInput): StatementLine[] {
  const out: StatementLine[] = []
  for (const t of input.teardowns) {
    if (!inPeriod(t.openedAt, input.period)) continue
    const c = contractFor(input.contracts, t.engineId, t.engineTypeId, t.openedAt)
    const charge = c?.rebuildCharges[t.reason]
    if (!c || !charge) continue
    out.push({ key: `rebuild:${t.id}`, kind: 'rebuild', contractId: c.id, description: `${t.engineSerial}: rebuild (${t.reason}), teardown of ${dateOf(t.openedAt)}`, quantity: 1, unit: 'rebuild', unitAmountMinor: charge, amountMinor: charge, taxRateBp: c.taxRateBp, evidence: { engineId: t.engineId, teardownId: t.id } })
  }
  for (const f of input.findings) {
    if (!inPeriod(f.openedAt, input.period)) continue
    const c = contractFor(input.contracts, f.engineId, f.engineTypeId, f.openedAt)
    const charge = c?.damageCharges[f.disposition]
    if (!c || !charge) continue
    out.push({ key: `damage:${f.id}`, kind: 'damage', contractId: c.id, description: `${f.engineSerial}: part ${f.partSerial} (${f.disposition}) charged to the team`, quantity: 1, unit: 'finding', unitAmountMinor: charge, amountMinor: charge, taxRateBp: c.taxRateBp, evidence: { engineId: f.engineId, teardownId: f.teardownId, findingId: f.id, photoIds: f.photoIds } })
  }
  return out
}

/** Every line of the period, fees first, in a stable order. */
export function statementLines(input: StatementInput): StatementLine[] {
  return [...feeLines(input), ...usageLines(input), ...overRevLines(input), ...teardownLines(input)]
}

/**
 * Lines that correct an issued statement: `billed` is what was charged per line key (its own
 * lines plus adjustments already issued against it), `recomputed` the lines of the same period
 * from the ledger as it is now. A difference becomes a debit or a credit with its reason.
 */
export function adjustmentLines(issued: { statementId: number; number: string; billed: Map<string, { amountMinor: number; taxRateBp: number; description: string }> }, recomputed: StatementLine[]): StatementLine[] {
  const out: StatementLine[] = []
  const now = new Map(recomputed.map((l) => [l.key, l]))
  const keys = [...new Set([...issued.billed.keys(), ...now.keys()])].sort()
  for (const key of keys) {
    const was = issued.billed.get(key)
    const line = now.get(key)
    const diff = (line?.amountMinor ?? 0) - (was?.amountMinor ?? 0)
    if (diff === 0) continue
    const reason = !was ? 'not in the ledger when it was issued' : !line ? 'no longer in the ledger' : 'the ledger changed after it was issued'
    out.push({
      key: `adjust:${issued.statementId}:${key}`,
      kind: 'adjustment',
      contractId: line?.contractId ?? null,
      description: `${diff > 0 ? 'Debit' : 'Credit'} on ${issued.number}: ${line?.description ?? was!.description} (${reason}; billed ${was?.amountMinor ?? 0}, now ${line?.amountMinor ?? 0} minor units)`,
      quantity: 1,
      unit: 'adjustment',
      unitAmountMinor: diff,
      amountMinor: diff,
      taxRateBp: line?.taxRateBp ?? was!.taxRateBp,
      evidence: line?.evidence ?? {},
      adjustsStatementId: issued.statementId,
    })
  }
  return out
}

/** Subtotal, tax (rounded once per rate, halves away from zero) and total, in minor units. */
export function statementTotals(lines: Pick<StatementLine, 'amountMinor' | 'taxRateBp'>[]): StatementTotals {
  const byRate = new Map<number, number>()
  for (const l of lines) byRate.set(l.taxRateBp, (byRate.get(l.taxRateBp) ?? 0) + l.amountMinor)
  const taxByRate = [...byRate.entries()].sort((a, b) => a[0] - b[0]).map(([rateBp, baseMinor]) => ({ rateBp, baseMinor, taxMinor: mulDivRound(baseMinor, rateBp, 10_000) }))
  const subtotalMinor = lines.reduce((s, l) => s + l.amountMinor, 0)
  const taxMinor = taxByRate.reduce((s, t) => s + t.taxMinor, 0)
  return { subtotalMinor, taxMinor, totalMinor: subtotalMinor + taxMinor, taxByRate }
}
