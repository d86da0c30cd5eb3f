// Statements per team and period: a draft computed from the ledger, reviewed, then issued and
// never changed again; what the ledger learns later becomes adjustment lines on a later statement.
import type { Knex } from 'knex'
import { adjustmentLines, statementLines, statementTotals, type StatementLine } from '#shared/domain/billing/statement'
import { formatMinor } from '#shared/domain/billing/money'
import type { GenerateStatementInput } from '#shared/schemas/billing'
import type { Party, StatementDto, StatementLineDto, StatementSummaryDto } from '#shared/types/billing'
import type { Actor } from '../../utils/guard'
import { scopeCatalogue, scopeOrganisations, scopeQuery } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest, conflict, notFound } from '../../utils/errors'
import { iso, json, num } from '../../utils/db'
import { contractsOverlapping, termsOf } from './contracts'
import { ledgerFindings, ledgerSessions, ledgerTeardowns, statementLineRows } from '../../../db/billing-ledger'

export const STATEMENT_OWNER = { supplier: 'st.supplier_id', team: 'st.team_id' }
/** Days from issue to due date (common practice: 30 days net). */
export const PAYMENT_TERMS_DAYS = 30

interface Period { kind: 'month' | 'event'; key: string; label: string; from: string; to: string }

async function periodOf(db: Knex | Knex.Transaction, actor: Actor, input: GenerateStatementInput, now: Date): Promise<Period> {
  let period: Period
  if (input.month) {
    const [y, m] = input.month.split('-').map(Number) as [number, number]
    const from = new Date(Date.UTC(y, m - 1, 1))
    const to = new Date(Date.UTC(y, m, 1))
    period = { kind: 'month', key: input.month, label: from.toLocaleDateString('en-GB', { month: 'long', year: 'numeric', timeZone: 'UTC' }), from: from.toISOString(), to: to.toISOString() }
  } else {
    const ev = await scopeCatalogue(db('events'), actor).where('id', input.eventId).first('id', 'name', 'starts_at', 'ends_at')
    if (!ev) badRequest(`Invalid input: eventId: event ${input.eventId} not found`)
    period = { kind: 'event', key: `event:${ev.id}`, label: ev.name, from: iso(ev.starts_at)!, to: iso(ev.ends_at)! }
  }
  if (Date.parse(period.to) > now.getTime()) badRequest(`Invalid input: ${input.month ? 'month' : 'eventId'}: the period ${period.label} is not closed yet (it ends ${period.to.slice(0, 10)})`)
  return period
}

const lastDay = (toIso: string) => new Date(Date.parse(toIso) - 1).toISOString().slice(0, 10)

/** The period's own lines from the ledger as it is now (no adjustments). */
async function periodLines(db: Knex | Knex.Transaction, actor: Actor, teamId: number, period: { from: string; to: string }, exceptStatementId: number | null) {
  const contracts = await contractsOverlapping(db, actor, teamId, period.from.slice(0, 10), lastDay(period.to))
  if (contracts.length === 0) return { contracts, lines: [] as StatementLine[] }
  const earliest = contracts.map((c) => c.validFrom).sort()[0]!
  const sessionsFrom = `${earliest}T00:00:00.000Z` < period.from ? `${earliest}T00:00:00.000Z` : period.from
  const billedSeason = await db('statement_lines as l')
    .join('statements as s', 's.id', 'l.statement_id')
    .where({ 's.team_id': teamId, 's.state': 'issued', 'l.kind': 'fee' })
    .whereNot('s.id', exceptStatementId ?? 0)
    .where('l.line_key', 'like', 'fee:season:%')
    .pluck('l.contract_id')
  const lines = statementLines({
    period,
    contracts: contracts.map(termsOf),
    sessions: await ledgerSessions(db, teamId, sessionsFrom, period.to),
    teardowns: await ledgerTeardowns(db, teamId, period.from, period.to),
    findings: await ledgerFindings(db, teamId, period.from, period.to),
    seasonFeesBilled: billedSeason,
  })
  return { contracts, lines }
}

/** Adjustments to every issued statement of the team for an earlier period. */
async function adjustmentsBefore(db: Knex | Knex.Transaction, actor: Actor, teamId: number, before: string): Promise<StatementLine[]> {
  const issued = await db('statements').where({ team_id: teamId, state: 'issued' }).where('period_to', '<=', new Date(before)).orderBy('period_from').select('id', 'number', 'period_from', 'period_to')
  const out: StatementLine[] = []
  for (const p of issued) {
    const own = await db('statement_lines').where('statement_id', p.id).whereNot('kind', 'adjustment').select('line_key', 'amount_minor', 'tax_rate_bp', 'description')
    const billed = new Map(own.map((l: any) => [l.line_key as string, { amountMinor: num(l.amount_minor), taxRateBp: num(l.tax_rate_bp), description: l.description as string }]))
    const later = await db('statement_lines as l').join('statements as s', 's.id', 'l.statement_id').where({ 'l.adjusts_statement_id': p.id, 's.state': 'issued' }).select('l.line_key', 'l.amount_minor', 'l.tax_rate_bp', 'l.description')
    const prefix = `adjust:${p.id}:`
    for (const l of later) {
      const key = String(l.line_key).slice(prefix.length)
      const was = billed.get(key)
      billed.set(key, { amountMinor: (was?.amountMinor ?? 0) + num(l.amount_minor), taxRateBp: num(l.tax_rate_bp), description: was?.description ?? l.description })
    }
    const { lines } = await periodLines(db, actor, teamId, { from: iso(p.period_from)!, to: iso(p.period_to)! }, p.id)
    out.push(...adjustmentLines({ statementId: p.id, number: p.number, billed }, lines))
  }
  return out
}

export async function generateStatement(trx: Knex.Transaction, actor: Actor, input: GenerateStatementInput, now = new Date()): Promise<StatementDto> {
  const team = await scopeOrganisations(trx('organisations'), actor).where({ id: input.teamId, kind: 'team' }).first('id', 'supplier_id')
  if (!team) badRequest(`Invalid input: teamId: team ${input.teamId} not found`)
  const period = await periodOf(trx, actor, input, now)
  // A session belongs to one statement: a month and an event that overlap it cannot both be billed.
  const overlapping = await trx('statements').where('team_id', team.id).whereNot('period_key', period.key).where('period_from', '<', new Date(period.to)).where('period_to', '>', new Date(period.from)).first('id', 'number', 'period_label')
  if (overlapping) conflict(`${input.month ? 'month' : 'eventId'}: ${period.label} overlaps statement ${overlapping.number ?? overlapping.id} (${overlapping.period_label}) of this team`)
  const existing = await trx('statements').where({ team_id: team.id, period_key: period.key }).forUpdate().first('id', 'state', 'number')
  if (existing?.state === 'issued') conflict(`${input.month ? 'month' : 'eventId'}: statement ${existing.number} for ${period.label} is issued and never changes; later changes go on the next statement`)
  const { contracts, lines } = await periodLines(trx, actor, team.id, period, existing?.id ?? null)
  if (contracts.length === 0) badRequest(`Invalid input: teamId: no lease contract of this team covers ${period.label}`)
  const currencies = [...new Set(contracts.map((c) => c.currency))]
  if (currencies.length > 1) badRequest(`Invalid input: currency: the team's contracts for ${period.label} are in ${currencies.join(' and ')}; one statement has one currency`)
  const all = [...lines, ...(await adjustmentsBefore(trx, actor, team.id, period.from))]
  const totals = statementTotals(all)
  const row = { supplier_id: team.supplier_id, team_id: team.id, period_kind: period.kind, period_key: period.key, period_label: period.label, period_from: new Date(period.from), period_to: new Date(period.to), currency: currencies[0]!, state: 'draft', subtotal_minor: totals.subtotalMinor, tax_minor: totals.taxMinor, total_minor: totals.totalMinor, reviewed_by: null, reviewed_at: null, updated_at: now }
  let id = existing?.id as number | undefined
  if (id) {
    await trx('statements').where('id', id).update(row)
    await trx('statement_lines').where('statement_id', id).delete()
  } else {
    ;[id] = await trx('statements').insert(row)
  }
  if (all.length) {
    await trx('statement_lines').insert(statementLineRows(id!, all))
  }
  await audit(trx, actor, { entity: 'statement', entityId: id!, action: existing ? 'recompute' : 'create', after: { period: period.key, lines: all.length, ...totals, taxByRate: undefined } })
  return (await getStatement(trx, actor, id!, now))!
}

async function statementRow(db: Knex | Knex.Transaction, actor: Actor, id: number, forUpdate = false) {
  const q = scopeQuery(db('statements as st').join('organisations as t', 't.id', 'st.team_id'), actor, STATEMENT_OWNER).where('st.id', id).select('st.*', 't.name as team_name')
  const row = await (forUpdate ? q.forUpdate().first() : q.first())
  if (!row) notFound('Statement')
  return row
}

export async function reviewStatement(trx: Knex.Transaction, actor: Actor, id: number): Promise<StatementDto> {
  const row = await statementRow(trx, actor, id, true)
  if (row.state !== 'draft') conflict(`state: statement ${id} is ${row.state}, only a draft is reviewed`)
  await trx('statements').where('id', id).update({ state: 'reviewed', reviewed_by: actor.id, reviewed_at: new Date(), updated_at: new Date() })
  await audit(trx, actor, { entity: 'statement', entityId: id, action: 'review' })
  return (await getStatement(trx, actor, id))!
}

async function partyOf(db: Knex | Knex.Transaction, orgId: number): Promise<Party> {
  const o = await db('organisations').where('id', orgId).first('name', 'billing_address', 'billing_email', 'tax_id')
  return { name: o.name, address: o.billing_address, email: o.billing_email, taxId: o.tax_id }
}

/**
 * Issues a reviewed statement and queues its invoice in one transaction. Issuing an issued
 * statement again answers it as it is: two issuers at once queue one invoice (the row lock and the
 * outbox's unique statement id).
 */
export async function issueStatement(trx: Knex.Transaction, actor: Actor, id: number, now = new Date()): Promise<{ id: number; alreadyIssued: boolean }> {
  const row = await statementRow(trx, actor, id, true)
  if (row.state === 'issued') return { id, alreadyIssued: true }
  if (row.state !== 'reviewed') conflict(`state: statement ${id} is a draft: review it before issuing`)
  const charged = await trx('statement_lines').where('statement_id', id).whereNot('amount_minor', 0).count({ n: '*' }).first()
  if (Number(charged?.n ?? 0) === 0) badRequest(`Invalid input: lines: statement ${id} has no lines to invoice`)
  // Two drafts computed before either was issued may carry the same adjustment: bill it once.
  const billedElsewhere = await trx('statement_lines as l')
    .join('statements as s', 's.id', 'l.statement_id')
    .where('s.state', 'issued')
    .whereIn('l.line_key', trx('statement_lines').where({ statement_id: id, kind: 'adjustment' }).select('line_key'))
    .first('s.number')
  if (billedElsewhere) conflict(`lines: an adjustment on this statement was billed on ${billedElsewhere.number} meanwhile; compute the draft again`)
  const team = await partyOf(trx, row.team_id)
  if (!team.email) badRequest(`Invalid input: billingEmail: ${team.name} has no billing contact; add one before issuing`)
  const supplier = await partyOf(trx, row.supplier_id)
  const number = `ST-${now.getUTCFullYear()}-${String(id).padStart(5, '0')}`
  await trx('statements').where('id', id).update({ state: 'issued', number, issued_by: actor.id, issued_at: now, due_at: new Date(now.getTime() + PAYMENT_TERMS_DAYS * 86_400_000), parties: JSON.stringify({ supplier, team }), payment_status: 'queued', updated_at: now })
  await trx('invoice_outbox').insert({ statement_id: id, next_attempt_at: now, created_at: now })
  await audit(trx, actor, { entity: 'statement', entityId: id, action: 'issue', after: { number, totalMinor: num(row.total_minor), currency: row.currency } })
  return { id, alreadyIssued: false }
}

/** open past its due date shows as overdue even before the service says so. */
export function shownPaymentStatus(status: string | null, dueAt: Date | string | null, now: Date) {
  if (status === 'open' && dueAt && new Date(dueAt).getTime() < now.getTime()) return 'overdue'
  return status
}

function summary(r: any, now: Date): StatementSummaryDto {
  return {
    id: r.id,
    teamId: r.team_id,
    teamName: r.team_name,
    periodKey: r.period_key,
    periodLabel: r.period_label,
    currency: r.currency,
    state: r.state,
    number: r.number,
    subtotalMinor: num(r.subtotal_minor),
    taxMinor: num(r.tax_minor),
    totalMinor: num(r.total_minor),
    issuedAt: iso(r.issued_at),
    dueAt: iso(r.due_at),
    paymentStatus: shownPaymentStatus(r.payment_status, r.due_at, now) as StatementSummaryDto['paymentStatus'],
    lineCount: num(r.line_count),
  }
}

export async function listStatements(db: Knex, actor: Actor, query: { teamId?: number; state?: string }, now = new Date()): Promise<StatementSummaryDto[]> {
  const q = scopeQuery(db('statements as st').join('organisations as t', 't.id', 'st.team_id'), actor, STATEMENT_OWNER)
    .select('st.*', 't.name as team_name', db('statement_lines as l').whereRaw('l.statement_id = st.id').count('*').as('line_count'))
    .orderBy([{ column: 'st.period_from', order: 'desc' }, { column: 't.name' }])
  if (query.teamId) q.where('st.team_id', query.teamId)
  if (query.state) q.where('st.state', query.state)
  return (await q).map((r: any) => summary(r, now))
}

export async function getStatement(db: Knex | Knex.Transaction, actor: Actor, id: number, now = new Date()): Promise<StatementDto> {
  const r = await statementRow(db, actor, id)
  const lines = await db('statement_lines').where('statement_id', id).orderBy('sort')
  const dtoLines: StatementLineDto[] = lines.map((l: any) => ({ id: l.id, key: l.line_key, kind: l.kind, description: l.description, quantity: num(l.quantity), unit: l.unit, unitAmountMinor: num(l.unit_amount_minor), amountMinor: num(l.amount_minor), taxRateBp: num(l.tax_rate_bp), adjustsStatementId: l.adjusts_statement_id, evidence: json(l.evidence, {}) }))
  const parties = json<{ supplier: Party; team: Party } | null>(r.parties, null) ?? { supplier: await partyOf(db, r.supplier_id), team: await partyOf(db, r.team_id) }
  return {
    ...summary({ ...r, line_count: lines.length }, now),
    periodFrom: iso(r.period_from)!,
    periodTo: iso(r.period_to)!,
    supplier: parties.supplier,
    team: parties.team,
    invoiceId: r.invoice_id,
    invoiceNumber: r.invoice_number,
    paidAt: iso(r.paid_at),
    reviewedAt: iso(r.reviewed_at),
    taxByRate: statementTotals(dtoLines).taxByRate,
    lines: dtoLines,
  }
}

/** The lines as CSV rows and columns (the route writes them with toCsv). */
export async function statementCsvRows(db: Knex, actor: Actor, id: number) {
  const s = await getStatement(db, actor, id)
  const rows = s.lines.map((l) => ({
    statement: s.number ?? `draft ${s.id}`,
    period: s.periodLabel,
    line: l.key,
    kind: l.kind,
    description: l.description,
    quantity: l.quantity,
    unit: l.unit,
    unit_amount: formatMinor(l.unitAmountMinor, s.currency),
    amount: formatMinor(l.amountMinor, s.currency),
    currency: s.currency,
    tax_rate_percent: l.taxRateBp / 100,
    sessions: (l.evidence.sessionIds ?? []).join(' '),
    teardown: l.evidence.teardownId ?? null,
    finding: l.evidence.findingId ?? null,
    adjusts_statement: l.adjustsStatementId,
  }))
  const columns = ['statement', 'period', 'line', 'kind', 'description', 'quantity', 'unit', 'unit_amount', 'amount', 'currency', 'tax_rate_percent', 'sessions', 'teardown', 'finding', 'adjusts_statement'] as const
  return { name: `${s.number ?? `statement-${s.id}`}.csv`, rows, columns: [...columns] }
}
