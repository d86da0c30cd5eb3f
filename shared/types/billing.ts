import type { LeaseTerms, LineEvidence, LineKind } from '../domain/billing/statement'
import type { PaymentStatus, StatementState } from '../schemas/billing'

/** A lease contract as the billing page lists it: its terms, with the names beside the ids. */
export interface ContractDto extends LeaseTerms {
  teamId: number
  teamName: string
  engineSerial: string | null
  engineTypeCode: string | null
  note: string | null
}

export interface Party {
  name: string
  address: string | null
  email: string | null
  taxId: string | null
}

export interface StatementSummaryDto {
  id: number
  teamId: number
  teamName: string
  periodKey: string
  periodLabel: string
  currency: string
  state: StatementState
  number: string | null
  subtotalMinor: number
  taxMinor: number
  totalMinor: number
  issuedAt: string | null
  dueAt: string | null
  paymentStatus: PaymentStatus | null
  lineCount: number
}

export interface StatementLineDto {
  id: number
  key: string
  kind: LineKind
  description: string
  quantity: number
  unit: string
  unitAmountMinor: number
  amountMinor: number
  taxRateBp: number
  adjustsStatementId: number | null
  evidence: LineEvidence
}

export interface StatementDto extends StatementSummaryDto {
  periodFrom: string
  periodTo: string
  supplier: Party
  team: Party
  invoiceId: string | null
  invoiceNumber: string | null
  paidAt: string | null
  reviewedAt: string | null
  taxByRate: { rateBp: number; baseMinor: number; taxMinor: number }[]
  lines: StatementLineDto[]
}
