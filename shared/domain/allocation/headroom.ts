// An engine's life as running hours to its warning level, the unit the allocation plans in.
// Each limit of each fitted part is used at a rate per running hour (1 h/h for hours, the recent
// km per hour, the recent equivalent hours per hour for the part's exponent); over-rev budgets are
// not projected (an over-rev cannot be planned) but one already at its warning level stops the engine.

export interface HeadroomLimit {
  kind: 'hours' | 'km' | 'eqHours' | 'overRev'
  /** e.g. "eq. h" */
  label: string
  used: number
  limit: number
  /** use per running hour; null when unknown (no recent distance), 0 for over-rev budgets */
  ratePerHour: number | null
}

export interface HeadroomPart {
  /** e.g. "Conrod 2 RD-4011" */
  name: string
  warningLevel: number
  limits: HeadroomLimit[]
}

export interface Headroom {
  hours: number
  governing: string | null
}

/** Hours to the first warning level on the parts as they are (0 when one has reached it already). */
export function headroomNow(parts: HeadroomPart[]): Headroom {
  return minimum(parts, (l) => l.used)
}

/** Hours to the first warning level after a rebuild that renews every life-limited part. */
export function headroomFresh(parts: HeadroomPart[]): Headroom {
  return minimum(parts, () => 0)
}

function minimum(parts: HeadroomPart[], usedOf: (l: HeadroomLimit) => number): Headroom {
  let best: Headroom = { hours: Infinity, governing: null }
  for (const p of parts) {
    for (const l of p.limits) {
      if (!(l.limit > 0)) continue
      const left = p.warningLevel * l.limit - usedOf(l)
      let hours: number
      if (left <= 0) hours = 0
      else if (l.ratePerHour === null || !(l.ratePerHour > 0)) continue
      else hours = left / l.ratePerHour
      if (hours < best.hours) best = { hours, governing: `${p.name}: ${l.label}` }
    }
  }
  return best
}
