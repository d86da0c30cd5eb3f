// Demo billing: invented addresses and lease terms for the demo teams, and a season of statements
// for Marlowe Vane Racing over the last three closed months: one paid, one open carrying an
// adjustment for a session that reached the ledger after its month was issued, one draft.
// Redfern Lattice Racing has a contract but no billing contact, so issuing to it is refused.
import type { Knex } from 'knex'
import { adjustmentLines, statementLines, statementTotals, type LeaseTerms, type StatementLine } from '../../shared/domain/billing/statement'
import { ledgerFindings, ledgerSessions, ledgerTeardowns, statementLineRows } from '../billing-ledger'
import { json } from '../values'

const DAY = 86_400_000
const day = (t: number) => new Date(t).toISOString().slice(0, 10)

export async function seedBilling(trx: Knex.Transaction, ctx: { supplierId: number; teams: Record<string, number>; now: Date }) {
  const now = ctx.now.getTime()
  const t = ctx.teams
  await trx('organisations').where('id', ctx.supplierId).update({ billing_email: 'accounts@keelbrook.test', billing_address: 'Unit 4, Ferrow Lane Trading Estate\nAldermoor AM3 9QT', tax_id: 'KB-VAT-4410-27' })
  await trx('organisations').where('id', t['Marlowe Vane Racing']).update({ billing_email: 'accounts@marlowe.test', billing_address: '12 Copse Row\nHindle Bridge HB7 2LW', tax_id: 'MV-VAT-8812-03' })
  await trx('organisations').where('id', t['Tidewater Apex Motorsport']).update({ billing_email: 'finance@tidewater.test', billing_address: 'Dock 3, Saltings Road\nPortlow PW1 5RE' })

  const types = Object.fromEntries((await trx('engine_types').select('id', 'code')).map((r) => [r.code, r.id]))
  const kt2201 = await trx('engines').where('serial', 'KT4-2201').first('id')
  const validFrom = day(now - 200 * DAY)
  const validTo = day(now + 120 * DAY)
  const base = { supplier_id: ctx.supplierId, valid_from: validFrom, valid_to: validTo, currency: 'EUR', tax_rate_bp: 2000, damage_charges: JSON.stringify({ scrap: 1_850_000, replace: 600_000 }) }
  const gtTerms = { fee_basis: 'event', fee_minor: 650_000, allowance_unit: 'h', allowance: 10, overage_rate_minor: 45_000, rebuild_charges: JSON.stringify({ failure: 2_800_000, 'over-rev inspection': 900_000 }), over_rev_charges: JSON.stringify({ B: 150_000, C: 1_200_000 }) }
  const contracts = [
    { ...base, ...gtTerms, team_id: t['Marlowe Vane Racing'], engine_type_id: types['KV8-45'], note: 'GT engines, per event' },
    { ...base, team_id: t['Marlowe Vane Racing'], engine_id: kt2201.id, fee_basis: 'season', fee_minor: 3_600_000, allowance_unit: 'km', allowance: 2500, overage_rate_minor: 180, rebuild_charges: JSON.stringify({ failure: 1_400_000 }), over_rev_charges: JSON.stringify({ C: 600_000 }), note: 'Touring engine KT4-2201, season lease' },
    { ...base, ...gtTerms, team_id: t['Tidewater Apex Motorsport'], engine_type_id: types['KV8-45'], fee_basis: 'season', fee_minor: 7_800_000, allowance: 12, note: 'GT engines, season lease' },
    { ...base, team_id: t['Redfern Lattice Racing'], engine_type_id: types['KT4-20'], fee_basis: 'event', fee_minor: 280_000, allowance_unit: 'km', allowance: 1500, overage_rate_minor: 150, rebuild_charges: JSON.stringify({ failure: 1_400_000 }), over_rev_charges: JSON.stringify({ C: 600_000 }), note: 'Touring engines, per event' },
  ]
  for (const c of contracts) await trx('lease_contracts').insert(c)

  const marlowe = t['Marlowe Vane Racing']!
  const terms: LeaseTerms[] = (await trx('lease_contracts').where('team_id', marlowe).orderBy('id')).map((r) => ({
    id: r.id, engineId: r.engine_id, engineTypeId: r.engine_type_id, validFrom: day(new Date(r.valid_from).getTime()), validTo: day(new Date(r.valid_to).getTime()), currency: r.currency,
    feeBasis: r.fee_basis, feeMinor: Number(r.fee_minor), allowanceUnit: r.allowance_unit, allowance: r.allowance, overageRateMinor: Number(r.overage_rate_minor),
    rebuildCharges: json(r.rebuild_charges, {}), overRevCharges: json(r.over_rev_charges, {}), damageCharges: json(r.damage_charges, {}), taxRateBp: r.tax_rate_bp,
  }))
  const thisMonth = new Date(Date.UTC(ctx.now.getUTCFullYear(), ctx.now.getUTCMonth(), 1))
  const month = (back: number) => {
    const from = new Date(Date.UTC(thisMonth.getUTCFullYear(), thisMonth.getUTCMonth() - back, 1))
    const to = new Date(Date.UTC(thisMonth.getUTCFullYear(), thisMonth.getUTCMonth() - back + 1, 1))
    return { key: from.toISOString().slice(0, 7), label: from.toLocaleDateString('en-GB', { month: 'long', year: 'numeric', timeZone: 'UTC' }), from: from.toISOString(), to: to.toISOString() }
  }
  const linesOf = async (p: { from: string; to: string }, seasonFeesBilled: number[], leaveOut: number | null = null) =>
    statementLines({
      period: p,
      contracts: terms,
      sessions: (await ledgerSessions(trx, marlowe, `${validFrom}T00:00:00.000Z`, p.to)).filter((s) => s.id !== leaveOut),
      teardowns: await ledgerTeardowns(trx, marlowe, p.from, p.to),
      findings: await ledgerFindings(trx, marlowe, p.from, p.to),
      seasonFeesBilled,
    })
  const parties = async () => {
    const party = async (id: number) => {
      const o = await trx('organisations').where('id', id).first()
      return { name: o.name, address: o.billing_address, email: o.billing_email, taxId: o.tax_id }
    }
    return JSON.stringify({ supplier: await party(ctx.supplierId), team: await party(marlowe) })
  }
  const engineer = await trx('users').where('email', 'engineer@keelbrook.test').first('id')
  const insert = async (p: ReturnType<typeof month>, lines: StatementLine[], issue: { issuedAt: number; paidAt?: number } | null) => {
    const totals = statementTotals(lines)
    const [id] = await trx('statements').insert({
      supplier_id: ctx.supplierId, team_id: marlowe, period_kind: 'month', period_key: p.key, period_label: p.label, period_from: new Date(p.from), period_to: new Date(p.to), currency: 'EUR',
      state: issue ? 'issued' : 'draft', subtotal_minor: totals.subtotalMinor, tax_minor: totals.taxMinor, total_minor: totals.totalMinor,
    })
    if (lines.length) await trx('statement_lines').insert(statementLineRows(id!, lines))
    if (issue) {
      await trx('statements').where('id', id).update({
        number: `ST-${new Date(issue.issuedAt).getUTCFullYear()}-${String(id).padStart(5, '0')}`, reviewed_by: engineer.id, reviewed_at: new Date(issue.issuedAt - DAY), issued_by: engineer.id, issued_at: new Date(issue.issuedAt),
        due_at: new Date(issue.issuedAt + 30 * DAY), parties: await parties(), payment_status: issue.paidAt ? 'paid' : 'open', paid_at: issue.paidAt ? new Date(issue.paidAt) : null,
      })
    }
    return id!
  }

  // Three months back: issued and paid, but without the session with the largest charge, which
  // (as the story goes) was imported after the statement went out.
  const first = month(3)
  const complete = await linesOf(first, [])
  const late = complete.filter((l) => l.kind === 'usage').sort((a, b) => b.amountMinor - a.amountMinor)[0]
  const lateSession = late?.amountMinor ? late.evidence.sessionIds![0]! : null
  const billed = await linesOf(first, [], lateSession)
  const firstId = await insert(first, billed, { issuedAt: now - 35 * DAY, paidAt: now - 20 * DAY })
  const seasonFees = billed.filter((l) => l.key.startsWith('fee:season:')).map((l) => l.contractId!)

  // Two months back: issued and open, carrying the adjustment for the late session.
  const second = month(2)
  const billedMap = new Map(billed.map((l) => [l.key, { amountMinor: l.amountMinor, taxRateBp: l.taxRateBp, description: l.description }]))
  const adjustments = adjustmentLines({ statementId: firstId, number: `ST-${new Date(now - 35 * DAY).getUTCFullYear()}-${String(firstId).padStart(5, '0')}`, billed: billedMap }, complete)
  await insert(second, [...(await linesOf(second, seasonFees)), ...adjustments], { issuedAt: now - 5 * DAY })

  // Last month: a draft for the supplier to review and issue.
  await insert(month(1), await linesOf(month(1), seasonFees), null)
}
