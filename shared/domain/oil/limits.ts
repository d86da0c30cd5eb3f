/**
 * Oil sample assessment: absolute limits, rate of change per 10 hours,
 * statistical limits from the population of an engine type, the SAE J300
 * grade (KV100 range and HTHS minimum) and the viscosity change from the
 * engine type's new-oil reference.
 *
 * These figures are an aid to the supplier's service instructions, inspection
 * and licensed practice, never a substitute: a 'normal' sample does not clear
 * an engine to run, and trends matter more than any single value.
 */
import { iso4406 } from './iso4406'
import { SAE_J300, hthsInGrade, kv100InGrade, parseGrade, viscosityIndex } from './viscosity'

export const OIL_ELEMENTS = ['Fe', 'Cu', 'Pb', 'Al', 'Cr', 'Sn', 'Ni', 'Si', 'Na', 'K', 'Mo', 'B', 'Zn', 'P', 'Ca', 'Mg'] as const
export type OilElement = typeof OIL_ELEMENTS[number]
export type OilStatus = 'normal' | 'caution' | 'critical'

export const OIL_ASSESSMENT_NOTICE =
  'Oil analysis figures support, and never replace, the engine supplier\'s service instructions, inspection and licensed practice.'

export interface OilSampleValues {
  sampleId: string
  /** ISO 8601 date or date-time */
  sampledAt: string
  engineHours: number | null
  oilHours: number | null
  /** ppm (mg/kg) */
  elements: Partial<Record<OilElement, number>>
  /** kinematic viscosity at 40 C, mm^2/s */
  kv40: number | null
  /** kinematic viscosity at 100 C, mm^2/s */
  kv100: number | null
  /** high-temperature high-shear viscosity at 150 C, mPa s */
  hths: number | null
  fuelDilutionPct: number | null
  waterPct: number | null
  /** cumulative particles per mL at >= 4 / 6 / 14 um(c) */
  p4: number | null
  p6: number | null
  p14: number | null
  /** SAE grade of the oil in the engine, e.g. '5W-40' */
  grade: string | null
  /** set when the oil was changed since the engine's previous sample */
  oilChanged?: boolean
  /** particles actually counted per channel (for the ISO 4406 '>=' mark) */
  countedParticles?: { p4?: number; p6?: number; p14?: number }
}

export interface ElementLimit {
  caution: number | null
  critical: number | null
  ratePer10hCaution: number | null
  ratePer10hCritical: number | null
}

/**
 * The oil the supplier specifies for an engine type, as measured new. The
 * viscosity changes of every sample are read against it; its grade is the
 * engine type's grade, used when a sample does not state its own.
 */
export interface NewOilReference {
  /** SAE J300 grade, e.g. '5W-40' */
  grade: string | null
  /** mm^2/s */
  kv40: number | null
  /** mm^2/s */
  kv100: number | null
  /** total base number, mg KOH/g (shown for reference; samples carry no TBN yet) */
  tbn: number | null
}

export interface OilLimits {
  elements: Partial<Record<OilElement, ElementLimit>>
  fuelDilutionCautionPct: number | null
  waterCautionPct: number | null
  /** relative change of KV40 from the new oil, percent, either way */
  kv40ChangeCautionPct: number | null
  /** relative change of KV100 from the new oil, percent, either way */
  kv100ChangeCautionPct: number | null
  /** without it (or without the figure) the changes are not checked */
  newOil: NewOilReference | null
  statistical: {
    enabled: boolean
    minSamples: number
    method: 'sigma' | 'percentile'
    cautionSigma: number
    criticalSigma: number
    /** percent, 0..100 */
    cautionPercentile: number
    criticalPercentile: number
  }
}

export interface PopulationLimit {
  element: OilElement
  n: number
  mean: number
  sd: number
  caution: number
  critical: number
  /** n >= minSamples and statistical limits enabled */
  active: boolean
}

export interface OilReason {
  element?: OilElement | 'kv40' | 'kv100' | 'hths' | 'fuel' | 'water'
  /** 'change' is a change from the new-oil reference */
  kind: 'absolute' | 'rate' | 'statistical' | 'grade' | 'change'
  level: 'caution' | 'critical'
  value: number
  limit: number
  message: string
}

export interface SampleAssessment {
  sampleId: string
  status: OilStatus
  reasons: OilReason[]
  iso4406: string | null
  viscosityIndex: number | null
  /** the grade the sample was judged by: its own, or the engine type's from the new-oil reference */
  grade: GradeBasis | null
  /** KV100 against the grade's range */
  gradeCheck: { ok: boolean; min: number; max: number } | null
  /** HTHS against the grade's minimum */
  hthsCheck: { ok: boolean; min: number } | null
  /** percent change from the new-oil reference; null where either figure is missing */
  viscosityChange: { kv40Pct: number | null; kv100Pct: number | null }
}

export interface GradeBasis {
  grade: string
  source: 'sample' | 'engine type'
  /** id of the SAE J300 edition the checks used */
  edition: string
}

// ------------------------------------------------------------- statistics

function assertNumbers(xs: number[], what: string): void {
  if (xs.length === 0) throw new RangeError(`${what} needs at least one value`)
  for (const x of xs) if (!Number.isFinite(x)) throw new RangeError(`${what}: not a finite number: ${x}`)
}

export function mean(xs: number[]): number {
  assertNumbers(xs, 'mean')
  let sum = 0
  for (const x of xs) sum += x
  return sum / xs.length
}

/** Sample standard deviation (n - 1 divisor). */
export function sampleSd(xs: number[]): number {
  assertNumbers(xs, 'sampleSd')
  if (xs.length < 2) throw new RangeError('sampleSd needs at least two values')
  const m = mean(xs)
  let ss = 0
  for (const x of xs) ss += (x - m) ** 2
  return Math.sqrt(ss / (xs.length - 1))
}

/**
 * p-th percentile (p in percent, 0..100).
 * 'linear': interpolates at rank (n - 1) p / 100 (Hyndman-Fan type 7).
 * 'nearest-rank': the smallest value with at least p % of the data at or below it.
 */
export function percentile(xs: number[], p: number, method: 'linear' | 'nearest-rank'): number {
  assertNumbers(xs, 'percentile')
  if (!(p >= 0 && p <= 100)) throw new RangeError(`percentile must be between 0 and 100, got ${p}`)
  const sorted = [...xs].sort((a, b) => a - b)
  const n = sorted.length
  if (method === 'nearest-rank') {
    const rank = Math.max(1, Math.ceil((p / 100) * n - 1e-12))
    return sorted[rank - 1]!
  }
  const h = ((n - 1) * p) / 100
  const lo = Math.floor(h)
  const hi = Math.min(lo + 1, n - 1)
  return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!)
}

/**
 * Statistical limits per element from the population of an engine type
 * (control-chart mean + k s, or percentiles of the sorted data, in the manner
 * of ASTM D7720). Pass the population without the sample being assessed.
 * Elements with no value in the population are left out.
 */
export function populationLimits(population: OilSampleValues[], limits: OilLimits): PopulationLimit[] {
  const st = limits.statistical
  const out: PopulationLimit[] = []
  for (const element of OIL_ELEMENTS) {
    const xs: number[] = []
    for (const s of population) {
      const v = s.elements[element]
      if (typeof v === 'number' && Number.isFinite(v)) xs.push(v)
    }
    if (xs.length === 0) continue
    const m = mean(xs)
    const sd = xs.length >= 2 ? sampleSd(xs) : 0
    const caution = st.method === 'sigma' ? m + st.cautionSigma * sd : percentile(xs, st.cautionPercentile, 'linear')
    const critical = st.method === 'sigma' ? m + st.criticalSigma * sd : percentile(xs, st.criticalPercentile, 'linear')
    out.push({ element, n: xs.length, mean: m, sd, caution, critical, active: st.enabled && xs.length >= st.minSamples })
  }
  return out
}

// ------------------------------------------------------------- assessment

const SEVERITY: Record<OilStatus, number> = { normal: 0, caution: 1, critical: 2 }

export function worstOilStatus(statuses: OilStatus[]): OilStatus {
  let worst: OilStatus = 'normal'
  for (const s of statuses) if (SEVERITY[s] > SEVERITY[worst]) worst = s
  return worst
}

/** Up to 3 significant figures, without trailing zeros, for messages. */
export function formatFigure(x: number): string {
  if (x === 0) return '0'
  const abs = Math.abs(x)
  if (abs >= 100) return String(Math.round(x))
  return String(Number(x.toPrecision(3)))
}

function levelFor(value: number, caution: number | null, critical: number | null): 'caution' | 'critical' | null {
  if (critical !== null && value > critical) return 'critical'
  if (caution !== null && value > caution) return 'caution'
  return null
}

/**
 * Hours between two samples of the same oil fill, or null when the oil was
 * changed between them or the hours do not allow a rate.
 */
export function hoursBetween(sample: OilSampleValues, previous: OilSampleValues): number | null {
  if (sample.oilChanged) return null
  const engineDelta = sample.engineHours !== null && previous.engineHours !== null ? sample.engineHours - previous.engineHours : null
  if (sample.oilHours !== null && previous.oilHours !== null) {
    // Oil hours going down means a fresh fill.
    if (sample.oilHours < previous.oilHours) return null
    // Oil younger than the engine-hours gap: it was changed in between.
    if (engineDelta !== null && sample.oilHours < engineDelta - 1e-9) return null
    const oilDelta = sample.oilHours - previous.oilHours
    return oilDelta > 0 ? oilDelta : null
  }
  if (engineDelta === null || !(engineDelta > 0)) return null
  // Oil younger than the gap between the samples: it was changed in between.
  if (sample.oilHours !== null && sample.oilHours < engineDelta - 1e-9) return null
  return engineDelta
}

/** Relative change of a viscosity from the new oil's, percent; null when either is missing. */
export function changeFromNewPct(value: number | null, newOil: number | null): number | null {
  if (value === null || newOil === null || !(newOil > 0) || !Number.isFinite(value)) return null
  return ((value - newOil) / newOil) * 100
}

/** Assesses one sample. previous = the same engine's previous sample, or null. */
export function assessSample(sample: OilSampleValues, previous: OilSampleValues | null, limits: OilLimits, population: PopulationLimit[]): SampleAssessment {
  const reasons: OilReason[] = []
  const hours = previous ? hoursBetween(sample, previous) : null

  for (const element of OIL_ELEMENTS) {
    const value = sample.elements[element]
    if (typeof value !== 'number' || !Number.isFinite(value)) continue
    const lim = limits.elements[element]

    if (lim) {
      const level = levelFor(value, lim.caution, lim.critical)
      if (level) {
        const limit = (level === 'critical' ? lim.critical : lim.caution)!
        reasons.push({ element, kind: 'absolute', level, value, limit, message: `${element} ${formatFigure(value)} ppm above the ${level} limit of ${formatFigure(limit)} ppm` })
      }
      const prevValue = previous?.elements[element]
      if (hours !== null && typeof prevValue === 'number' && Number.isFinite(prevValue)) {
        const rate = ((value - prevValue) / hours) * 10
        const rateLevel = levelFor(rate, lim.ratePer10hCaution, lim.ratePer10hCritical)
        if (rateLevel) {
          const limit = (rateLevel === 'critical' ? lim.ratePer10hCritical : lim.ratePer10hCaution)!
          reasons.push({
            element, kind: 'rate', level: rateLevel, value: rate, limit,
            message: `${element} rising ${formatFigure(rate)} ppm per 10 h, above the ${rateLevel} rate of ${formatFigure(limit)} ppm per 10 h`,
          })
        }
      }
    }

    const pop = population.find((p) => p.element === element)
    if (pop && pop.active) {
      const level = levelFor(value, pop.caution, pop.critical)
      if (level) {
        const limit = level === 'critical' ? pop.critical : pop.caution
        const how = limits.statistical.method === 'sigma'
          ? `mean + ${level === 'critical' ? limits.statistical.criticalSigma : limits.statistical.cautionSigma} s`
          : `${level === 'critical' ? limits.statistical.criticalPercentile : limits.statistical.cautionPercentile}th percentile`
        reasons.push({
          element, kind: 'statistical', level, value, limit,
          message: `${element} ${formatFigure(value)} ppm above the statistical ${level} limit of ${formatFigure(limit)} ppm (${how} of ${pop.n} samples)`,
        })
      }
    }
  }

  if (sample.fuelDilutionPct !== null && limits.fuelDilutionCautionPct !== null && sample.fuelDilutionPct > limits.fuelDilutionCautionPct) {
    reasons.push({
      element: 'fuel', kind: 'absolute', level: 'caution', value: sample.fuelDilutionPct, limit: limits.fuelDilutionCautionPct,
      message: `fuel dilution ${formatFigure(sample.fuelDilutionPct)} % above the caution limit of ${formatFigure(limits.fuelDilutionCautionPct)} %`,
    })
  }
  if (sample.waterPct !== null && limits.waterCautionPct !== null && sample.waterPct > limits.waterCautionPct) {
    reasons.push({
      element: 'water', kind: 'absolute', level: 'caution', value: sample.waterPct, limit: limits.waterCautionPct,
      message: `water ${formatFigure(sample.waterPct)} % above the caution limit of ${formatFigure(limits.waterCautionPct)} %`,
    })
  }

  const reference = limits.newOil ?? null
  // The sample's own grade is what was in the engine; the type's specified grade stands in when the lab gave none.
  const sampleGrade = sample.grade && parseGrade(sample.grade) ? sample.grade : null
  const refGrade = reference?.grade && parseGrade(reference.grade) ? reference.grade : null
  const grade: GradeBasis | null = sampleGrade
    ? { grade: sampleGrade, source: 'sample', edition: SAE_J300.id }
    : refGrade ? { grade: refGrade, source: 'engine type', edition: SAE_J300.id } : null
  const gradeName = grade ? `${grade.source === 'engine type' ? "engine type's " : ''}SAE ${grade.grade}` : ''

  let gradeCheck: SampleAssessment['gradeCheck'] = null
  if (sample.kv100 !== null && grade) {
    gradeCheck = kv100InGrade(grade.grade, sample.kv100)
    if (gradeCheck && !gradeCheck.ok) {
      const low = sample.kv100 < gradeCheck.min
      const limit = low ? gradeCheck.min : gradeCheck.max
      reasons.push({
        element: 'kv100', kind: 'grade', level: 'caution', value: sample.kv100, limit,
        message: `KV100 ${formatFigure(sample.kv100)} mm²/s ${low ? 'below' : 'at or above'} the ${gradeName} ${low ? 'minimum' : 'upper bound'} of ${formatFigure(limit)} mm²/s`,
      })
    }
  }

  let hthsCheck: SampleAssessment['hthsCheck'] = null
  if (typeof sample.hths === 'number' && grade) {
    hthsCheck = hthsInGrade(grade.grade, sample.hths)
    if (hthsCheck && !hthsCheck.ok) {
      reasons.push({
        element: 'hths', kind: 'grade', level: 'caution', value: sample.hths, limit: hthsCheck.min,
        message: `HTHS ${formatFigure(sample.hths)} mPa·s below the ${gradeName} minimum of ${formatFigure(hthsCheck.min)} mPa·s (SAE J300)`,
      })
    }
  }

  const viscosityChange = {
    kv40Pct: changeFromNewPct(sample.kv40, reference?.kv40 ?? null),
    kv100Pct: changeFromNewPct(sample.kv100, reference?.kv100 ?? null),
  }
  for (const [element, pct, limit] of [
    ['kv40', viscosityChange.kv40Pct, limits.kv40ChangeCautionPct],
    ['kv100', viscosityChange.kv100Pct, limits.kv100ChangeCautionPct],
  ] as const) {
    // Either way matters: thinner oil points to fuel or shear, thicker to oxidation or soot.
    if (pct === null || limit === null || !(Math.abs(pct) > limit)) continue
    const name = element === 'kv40' ? 'KV40' : 'KV100'
    reasons.push({
      element, kind: 'change', level: 'caution', value: pct, limit,
      message: `${name} changed ${pct > 0 ? '+' : ''}${formatFigure(pct)} % from new oil, beyond the caution limit of ${formatFigure(limit)} %`,
    })
  }

  let vi: number | null = null
  if (sample.kv40 !== null && sample.kv100 !== null) {
    try {
      vi = viscosityIndex(sample.kv40, sample.kv100).reported
    } catch {
      vi = null // VI not defined for these viscosities
    }
  }

  return {
    sampleId: sample.sampleId,
    status: worstOilStatus(reasons.map((r) => r.level)),
    reasons,
    iso4406: iso4406({ p4: sample.p4, p6: sample.p6, p14: sample.p14 }, sample.countedParticles ? { countedParticles: sample.countedParticles } : undefined),
    viscosityIndex: vi,
    grade,
    gradeCheck,
    hthsCheck,
    viscosityChange,
  }
}

/**
 * Demo defaults. Caution levels, fuel, water and viscosity change limits
 * (KV100 15 %, KV40 25 %) are common practice for petrol engines (no single
 * source; trends matter more than absolutes). The critical levels (twice caution), the iron rate limits and
 * the statistical percentiles are invented for the demo. Every engine type
 * should carry its supplier's own figures.
 */
export const DEFAULT_OIL_LIMITS: OilLimits = Object.freeze({
  elements: Object.freeze({
    Fe: { caution: 100, critical: 200, ratePer10hCaution: 20, ratePer10hCritical: 40 },
    Cr: { caution: 10, critical: 20, ratePer10hCaution: null, ratePer10hCritical: null },
    Cu: { caution: 20, critical: 40, ratePer10hCaution: null, ratePer10hCritical: null },
    Sn: { caution: 10, critical: 20, ratePer10hCaution: null, ratePer10hCritical: null },
    Al: { caution: 20, critical: 40, ratePer10hCaution: null, ratePer10hCritical: null },
    Pb: { caution: 25, critical: 50, ratePer10hCaution: null, ratePer10hCritical: null },
    Si: { caution: 20, critical: 40, ratePer10hCaution: null, ratePer10hCritical: null },
    B: { caution: 20, critical: 40, ratePer10hCaution: null, ratePer10hCritical: null },
  }),
  fuelDilutionCautionPct: 5,
  waterCautionPct: 0.1,
  kv40ChangeCautionPct: 25,
  kv100ChangeCautionPct: 15,
  newOil: null,
  statistical: Object.freeze({
    enabled: true,
    minSamples: 30,
    method: 'sigma',
    cautionSigma: 2,
    criticalSigma: 3,
    cautionPercentile: 95,
    criticalPercentile: 98,
  }),
}) as OilLimits
