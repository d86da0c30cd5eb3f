// Field evidence of a part type: each part's life with its outcome per failure mode, the input of
// the Weibull analysis. Pure: no clock, no I/O. What a fit says is for the supplier's engineering
// judgement on a limit; the limit stays the supplier's decision.
import { adjustedRanks, fitWeibull, type LifeUnit, type WeibullAnswer } from './weibull'

/** Failure modes a finding can be classified as (the trade's usual words). */
export const FAILURE_MODES = ['fatigue crack', 'fracture', 'seizure', 'wear beyond limit', 'scoring', 'pitting', 'loss of load', 'overheating', 'deformation'] as const
export type FailureMode = (typeof FAILURE_MODES)[number]
/** A finding the supplier engineer has read and judged not to be a failure. */
export const NOT_A_FAILURE = 'not a failure'
/** The combined analysis: a part fails at its first failure of any mode. */
export const ANY_MODE = 'any failure mode'

export const EVIDENCE_MEASURES = ['hours', 'eqHours', 'km', 'overRev'] as const
export type EvidenceMeasure = (typeof EVIDENCE_MEASURES)[number]
export const MEASURE_UNITS: Record<EvidenceMeasure, string> = { hours: 'h', eqHours: 'eq. h', km: 'km', overRev: 'events' }
export const MEASURE_LABELS: Record<EvidenceMeasure, string> = { hours: 'running hours', eqHours: 'equivalent hours', km: 'kilometres', overRev: 'over-rev events (all bands)' }

export type LifeFigures = Record<EvidenceMeasure, number>

export interface EvidenceFinding {
  findingId: number
  /** life of the part when the teardown that found it was opened */
  life: LifeFigures
  /** null: not yet classified */
  failureMode: string | null
}

export interface EvidencePart {
  componentId: number
  serial: string
  /** life at its last removal, or today while it still runs */
  life: LifeFigures
  running: boolean
  findings: EvidenceFinding[]
}

export interface ModeUnit {
  componentId: number
  serial: string
  life: number
  failed: boolean
}

export interface ModeEvidence {
  mode: string
  units: ModeUnit[]
  failures: number
  /** parts left out because they have no life in this measure (never ran, or no km on a bench) */
  excluded: number
  fit: WeibullAnswer
  /** the failures at their adjusted median ranks, for the plot; shown with or without a fit */
  plotted: { life: number; medianRank: number; serial: string }[]
}

/** The first finding classified as a failure, in order of life at the finding. */
function firstFailure(p: EvidencePart, measure: EvidenceMeasure): EvidenceFinding | null {
  const failures = p.findings.filter((f) => f.failureMode !== null && f.failureMode !== NOT_A_FAILURE)
  failures.sort((a, b) => a.life[measure] - b.life[measure])
  return failures[0] ?? null
}

/**
 * One unit per part: a part is at risk until its first failure of any mode. For mode M it is a
 * failure when that first failure is M, and a suspension otherwise: at its failure of another mode
 * (competing modes) or at its last removal or today's life (removed without failure, or still running).
 */
export function unitsForMode(parts: readonly EvidencePart[], measure: EvidenceMeasure, mode: string): { units: ModeUnit[]; excluded: number } {
  const units: ModeUnit[] = []
  let excluded = 0
  for (const p of parts) {
    const first = firstFailure(p, measure)
    const life = first ? first.life[measure] : p.life[measure]
    if (!(life > 0)) {
      excluded += 1
      continue
    }
    const failed = first !== null && (mode === ANY_MODE || first.failureMode === mode)
    units.push({ componentId: p.componentId, serial: p.serial, life, failed })
  }
  return { units, excluded }
}

/** The failure modes found among the parts' classified findings, most frequent first. */
export function modesFound(parts: readonly EvidencePart[]): string[] {
  const count = new Map<string, number>()
  for (const p of parts) for (const f of p.findings) if (f.failureMode && f.failureMode !== NOT_A_FAILURE) count.set(f.failureMode, (count.get(f.failureMode) ?? 0) + 1)
  return [...count.entries()].sort((a, b) => b[1] - a[1] || a[0].localeCompare(b[0])).map(([m]) => m)
}

/** The analysis per failure mode, the combined one first when there is more than one mode. */
export function evidenceByMode(parts: readonly EvidencePart[], measure: EvidenceMeasure): ModeEvidence[] {
  const modes = modesFound(parts)
  const list = modes.length > 1 ? [ANY_MODE, ...modes] : modes.length ? modes : [ANY_MODE]
  return list.map((mode) => {
    const { units, excluded } = unitsForMode(parts, measure, mode)
    const asUnits: LifeUnit[] = units.map((u) => ({ life: u.life, failed: u.failed }))
    const failures = units.filter((u) => u.failed)
    // Plot positions in the same order adjustedRanks uses, so each failure keeps its serial.
    const ranked = failures.length ? adjustedRanks(asUnits) : []
    const bySerial = [...failures].sort((a, b) => a.life - b.life)
    return {
      mode,
      units,
      failures: failures.length,
      excluded,
      fit: fitWeibull(asUnits),
      plotted: ranked.map((r, i) => ({ life: r.life, medianRank: r.medianRank, serial: bySerial[i]!.serial })),
    }
  })
}
