// Lease contracts, billing contacts and the findings the supplier charges to the team.
import type { Knex } from 'knex'
import type { BillingContactSchema, ContractInput, FindingChargeSchema } from '#shared/schemas/billing'
import type { ContractDto } from '#shared/types/billing'
import type { LeaseTerms } from '#shared/domain/billing/statement'
import type { z } from 'zod'
import type { Actor } from '../../utils/guard'
import { scopeOrganisations, scopeQuery } from '../../utils/guard'
import { audit } from '../../utils/audit'
import { badRequest, conflict, notFound } from '../../utils/errors'
import { iso, json, num } from '../../utils/db'

export const CONTRACT_OWNER = { supplier: 'c.supplier_id', team: 'c.team_id' }

function contractDto(r: any): ContractDto {
  return {
    id: r.id,
    teamId: r.team_id,
    teamName: r.team_name,
    engineId: r.engine_id,
    engineSerial: r.engine_serial ?? null,
    engineTypeId: r.engine_type_id,
    engineTypeCode: r.engine_type_code ?? null,
    validFrom: iso(r.valid_from)!.slice(0, 10),
    validTo: iso(r.valid_to)!.slice(0, 10),
    currency: r.currency,
    feeBasis: r.fee_basis,
    feeMinor: num(r.fee_minor),
    allowanceUnit: r.allowance_unit,
    allowance: num(r.allowance),
    overageRateMinor: num(r.overage_rate_minor),
    rebuildCharges: json(r.rebuild_charges, {}),
    overRevCharges: json(r.over_rev_charges, {}),
    damageCharges: json(r.damage_charges, {}),
    taxRateBp: num(r.tax_rate_bp),
    note: r.note,
  }
}

export function termsOf(c: ContractDto): LeaseTerms {
  return { ...c }
}

function contractQuery(db: Knex | Knex.Transaction, actor: Actor) {
  return scopeQuery(
    db('lease_contracts as c')
      .join('organisations as t', 't.id', 'c.team_id')
      .leftJoin('engines as e', 'e.id', 'c.engine_id')
      .leftJoin('engine_types as et', 'et.id', 'c.engine_type_id')
      .select('c.*', 't.name as team_name', 'e.serial as engine_serial', 'et.code as engine_type_code'),
    actor,
    CONTRACT_OWNER,
  )
}

export async function listContracts(db: Knex, actor: Actor, teamId?: number): Promise<ContractDto[]> {
  const q = contractQuery(db, actor).orderBy([{ column: 't.name' }, { column: 'c.valid_from' }, { column: 'c.id' }])
  if (teamId) q.where('c.team_id', teamId)
  return (await q).map(contractDto)
}

/** The contracts of a team that overlap [from, to] (calendar dates), scoped to the actor. */
export async function contractsOverlapping(db: Knex | Knex.Transaction, actor: Actor, teamId: number, from: string, to: string): Promise<ContractDto[]> {
  return (await contractQuery(db, actor).where('c.team_id', teamId).where('c.valid_from', '<=', to).where('c.valid_to', '>=', from).orderBy('c.id')).map(contractDto)
}

export async function createContract(trx: Knex.Transaction, actor: Actor, input: ContractInput): Promise<ContractDto> {
  const team = await scopeOrganisations(trx('organisations'), actor).where({ id: input.teamId, kind: 'team' }).first('id', 'supplier_id')
  if (!team) badRequest(`Invalid input: teamId: team ${input.teamId} not found`)
  if (input.engineId !== null) {
    const engine = await scopeQuery(trx('engines'), actor, { supplier: 'supplier_id', team: 'team_id' }).where('id', input.engineId).first('id', 'supplier_id')
    if (!engine) badRequest(`Invalid input: engineId: engine ${input.engineId} not found`)
  } else {
    const type = await trx('engine_types').where({ id: input.engineTypeId, supplier_id: team.supplier_id }).first('id')
    if (!type) badRequest(`Invalid input: engineTypeId: engine type ${input.engineTypeId} not found`)
  }
  // The row lock on the team keeps two concurrent writers from both passing the overlap check.
  await trx('organisations').where('id', team.id).forUpdate().first('id')
  const clash = await trx('lease_contracts')
    .where({ team_id: team.id, engine_id: input.engineId, engine_type_id: input.engineTypeId })
    .where('valid_from', '<=', input.validTo)
    .where('valid_to', '>=', input.validFrom)
    .first('id', 'valid_from', 'valid_to')
  if (clash) conflict(`validFrom: overlaps contract ${clash.id} (${iso(clash.valid_from)!.slice(0, 10)} to ${iso(clash.valid_to)!.slice(0, 10)}) for the same ${input.engineId ? 'engine' : 'engine type'}`)
  const [id] = await trx('lease_contracts').insert({
    supplier_id: team.supplier_id,
    team_id: team.id,
    engine_id: input.engineId,
    engine_type_id: input.engineTypeId,
    valid_from: input.validFrom,
    valid_to: input.validTo,
    currency: input.currency,
    fee_basis: input.feeBasis,
    fee_minor: input.feeMinor,
    allowance_unit: input.allowanceUnit,
    allowance: input.allowance,
    overage_rate_minor: input.overageRateMinor,
    rebuild_charges: JSON.stringify(input.rebuildCharges),
    over_rev_charges: JSON.stringify(input.overRevCharges),
    damage_charges: JSON.stringify(input.damageCharges),
    tax_rate_bp: input.taxRateBp,
    note: input.note,
    created_by: actor.id,
  })
  await audit(trx, actor, { entity: 'lease_contract', entityId: id!, action: 'create', after: input })
  const created = await contractQuery(trx, actor).where('c.id', id).first()
  return contractDto(created)
}

/**
 * Ends a contract on `validTo`, never before today (UTC): the periods already billed keep the terms
 * they were billed on, so a later adjustment never reprices them. Only shortens; a longer term is a
 * new contract.
 */
export async function endContract(trx: Knex.Transaction, actor: Actor, id: number, input: { validTo: string }, now = new Date()): Promise<ContractDto> {
  const row = await contractQuery(trx, actor).where('c.id', id).forUpdate().first()
  if (!row) notFound('Contract not found')
  const before = contractDto(row)
  const today = now.toISOString().slice(0, 10)
  if (input.validTo < today) badRequest(`Invalid input: validTo: ${input.validTo} is in the past; a contract ends today (${today}) at the earliest, so what was billed keeps its terms`)
  if (input.validTo < before.validFrom) badRequest(`Invalid input: validTo: must not be before validFrom (${before.validFrom})`)
  if (input.validTo >= before.validTo) conflict(`validTo: the contract already ends on ${before.validTo}; only an earlier end can be set (add a new contract for a longer term)`)
  await trx('lease_contracts').where('id', id).update({ valid_to: input.validTo })
  await audit(trx, actor, { entity: 'lease_contract', entityId: id, action: 'end', before: { validTo: before.validTo }, after: { validTo: input.validTo } })
  return contractDto(await contractQuery(trx, actor).where('c.id', id).first())
}

/** The supplier marks a teardown finding as the team's doing; the contract's damage rule prices it. */
export async function chargeFinding(trx: Knex.Transaction, actor: Actor, findingId: number, input: z.infer<typeof FindingChargeSchema>) {
  const finding = await scopeQuery(
    trx('teardown_findings as f').join('teardowns as td', 'td.id', 'f.teardown_id').join('engines as e', 'e.id', 'td.engine_id'),
    actor,
    { supplier: 'e.supplier_id', team: 'e.team_id' },
  )
    .where('f.id', findingId)
    .first('f.id')
  if (!finding) notFound('Finding')
  const existing = await trx('finding_charges').where('finding_id', findingId).first('id')
  if (existing) conflict(`finding ${findingId} is already charged to the team`)
  await trx('finding_charges').insert({ finding_id: findingId, reason: input.reason, marked_by: actor.id, marked_at: new Date() })
  await audit(trx, actor, { entity: 'teardown_finding', entityId: findingId, action: 'charge-to-team', after: input })
  return { findingId, charged: true }
}

export async function setBillingContact(trx: Knex.Transaction, actor: Actor, organisationId: number, input: z.infer<typeof BillingContactSchema>) {
  const org = await scopeOrganisations(trx('organisations'), actor).where('id', organisationId).forUpdate().first('id', 'billing_email', 'billing_address', 'tax_id')
  if (!org) notFound('Organisation')
  const after = { billing_email: input.billingEmail, billing_address: input.billingAddress, tax_id: input.taxId }
  await trx('organisations').where('id', org.id).update(after)
  await audit(trx, actor, { entity: 'organisation', entityId: org.id, action: 'billing-contact', before: { billing_email: org.billing_email, billing_address: org.billing_address, tax_id: org.tax_id }, after })
  return { id: org.id, ...input }
}
