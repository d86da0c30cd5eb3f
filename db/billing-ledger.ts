// What a statement prices, read from the life ledger as plain rows for the pure arithmetic
// (shared/domain/billing/statement.ts); shared by the billing service and the demo seed.
import type { Knex } from 'knex'
import type { LedgerFinding, LedgerSession, LedgerTeardown, StatementLine } from '../shared/domain/billing/statement'
import { iso, json, num } from './values'

/**
 * The one place sessions enter billing: every session a statement may price passes through here,
 * so a rule that takes sessions out of billing (a voided session, say) is added once.
 */
export function billableSessions(db: Knex | Knex.Transaction) {
  // A voided session bills nothing; voided after its period was issued, it becomes a credit on the next statement.
  return db('sessions as s').whereNull('s.voided_at')
}

/** A team's sessions from `from` up to `to` (ISO instants), with what the statement prints beside them. */
export async function ledgerSessions(db: Knex | Knex.Transaction, teamId: number, from: string, to: string): Promise<LedgerSession[]> {
  const rows = await billableSessions(db)
    .join('engines as e', 'e.id', 's.engine_id')
    .leftJoin('events as ev', 'ev.id', 's.event_id')
    .where('s.team_id', teamId)
    .where('s.started_at', '>=', new Date(from))
    .where('s.started_at', '<', new Date(to))
    .orderBy([{ column: 's.started_at' }, { column: 's.id' }])
    .select('s.id', 's.engine_id', 'e.engine_type_id', 'e.serial', 's.started_at', 's.running_seconds', 's.distance_km', 's.event_id', 'ev.name as event_name', 's.over_revs')
  return rows.map((r: any) => ({
    id: r.id,
    engineId: r.engine_id,
    engineTypeId: r.engine_type_id,
    engineSerial: r.serial,
    startedAt: iso(r.started_at)!,
    // The ledger keeps 3 decimals: whole ms and m are exact.
    runningMs: Math.round(num(r.running_seconds) * 1000),
    distanceM: Math.round(num(r.distance_km) * 1000),
    eventId: r.event_id,
    eventName: r.event_name,
    overRevs: json<any[]>(r.over_revs, []).map((e) => ({ bandId: String(e.bandId), peakRpm: Number(e.peakRpm), startS: Number(e.startS) })),
  }))
}

/** Teardowns of engines the team runs, opened in [from, to). */
export async function ledgerTeardowns(db: Knex | Knex.Transaction, teamId: number, from: string, to: string): Promise<LedgerTeardown[]> {
  const rows = await db('teardowns as td')
    .join('engines as e', 'e.id', 'td.engine_id')
    .where('e.team_id', teamId)
    .where('td.opened_at', '>=', new Date(from))
    .where('td.opened_at', '<', new Date(to))
    .orderBy('td.id')
    .select('td.id', 'td.engine_id', 'e.engine_type_id', 'e.serial', 'td.opened_at', 'td.reason')
  return rows.map((r: any) => ({ id: r.id, engineId: r.engine_id, engineTypeId: r.engine_type_id, engineSerial: r.serial, openedAt: iso(r.opened_at)!, reason: r.reason }))
}

/** Findings the supplier charged to the team, in teardowns opened in [from, to), with their photos. */
export async function ledgerFindings(db: Knex | Knex.Transaction, teamId: number, from: string, to: string): Promise<LedgerFinding[]> {
  const rows = await db('teardown_findings as f')
    .join('finding_charges as fc', 'fc.finding_id', 'f.id')
    .join('teardowns as td', 'td.id', 'f.teardown_id')
    .join('engines as e', 'e.id', 'td.engine_id')
    .join('components as c', 'c.id', 'f.component_id')
    .where('e.team_id', teamId)
    .where('td.opened_at', '>=', new Date(from))
    .where('td.opened_at', '<', new Date(to))
    .orderBy('f.id')
    .select('f.id', 'f.teardown_id', 'td.engine_id', 'e.engine_type_id', 'e.serial', 'td.opened_at', 'c.serial as part_serial', 'f.disposition')
  const photos = rows.length ? await db('teardown_photos').whereIn('finding_id', rows.map((r: any) => r.id)).orderBy('id').select('id', 'finding_id') : []
  return rows.map((r: any) => ({
    id: r.id,
    teardownId: r.teardown_id,
    engineId: r.engine_id,
    engineTypeId: r.engine_type_id,
    engineSerial: r.serial,
    openedAt: iso(r.opened_at)!,
    partSerial: r.part_serial,
    disposition: r.disposition,
    photoIds: photos.filter((p: any) => p.finding_id === r.id).map((p: any) => p.id),
  }))
}

/** statement_lines rows of a statement's lines, in their order. */
export function statementLineRows(statementId: number, lines: StatementLine[]) {
  return lines.map((l, i) => ({
    statement_id: statementId,
    sort: i,
    line_key: l.key,
    kind: l.kind,
    contract_id: l.contractId,
    description: l.description.slice(0, 500),
    quantity: l.quantity,
    unit: l.unit,
    unit_amount_minor: l.unitAmountMinor,
    amount_minor: l.amountMinor,
    tax_rate_bp: l.taxRateBp,
    adjusts_statement_id: l.adjustsStatementId ?? null,
    evidence: JSON.stringify(l.evidence),
  }))
}
