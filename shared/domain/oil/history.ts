/**
 * Assessment of an engine's sample history: each sample against the limits,
 * the engine's previous sample (rate) and the population of its engine type.
 */
import { OIL_ELEMENTS, assessSample, populationLimits, type OilElement, type OilLimits, type OilSampleValues, type PopulationLimit, type SampleAssessment } from './limits'

export interface AssessedSample {
  values: OilSampleValues
  previousSampleId: string | null
  assessment: SampleAssessment
}

function byDate(a: OilSampleValues, b: OilSampleValues): number {
  const d = Date.parse(a.sampledAt) - Date.parse(b.sampledAt)
  if (d !== 0) return d
  // Same moment: more engine hours is the later sample.
  return (a.engineHours ?? 0) - (b.engineHours ?? 0)
}

/** Oldest first, the order in which rates are read. */
export function sortSamples(samples: OilSampleValues[]): OilSampleValues[] {
  return [...samples].sort(byDate)
}

/** Population limits for one sample: the type's population without that sample. */
export function populationLimitsExcluding(population: OilSampleValues[], sampleId: string, limits: OilLimits): PopulationLimit[] {
  return populationLimits(population.filter((s) => s.sampleId !== sampleId), limits)
}

/**
 * Population limits with one sample left out, for many samples of the same
 * population. With the sigma method it keeps shifted sums per element, so
 * each leave-one-out costs one pass over the elements instead of one over the
 * population (the page of an engine assesses every sample); the percentile
 * method sorts afresh each time.
 */
export function leaveOneOutLimits(population: OilSampleValues[], limits: OilLimits): (sampleId: string) => PopulationLimit[] {
  const st = limits.statistical
  if (st.method !== 'sigma') return (sampleId) => populationLimitsExcluding(population, sampleId, limits)
  const byId = new Map(population.map((s) => [s.sampleId, s]))
  // Sums of (x - shift) keep the variance accurate when the spread is small beside the mean.
  const acc = new Map<OilElement, { shift: number; n: number; sum: number; sumSq: number }>()
  for (const s of population) {
    for (const element of OIL_ELEMENTS) {
      const v = s.elements[element]
      if (typeof v !== 'number' || !Number.isFinite(v)) continue
      let a = acc.get(element)
      if (!a) acc.set(element, (a = { shift: v, n: 0, sum: 0, sumSq: 0 }))
      const d = v - a.shift
      a.n += 1
      a.sum += d
      a.sumSq += d * d
    }
  }
  return (sampleId) => {
    const left = byId.get(sampleId)
    const out: PopulationLimit[] = []
    for (const element of OIL_ELEMENTS) {
      const a = acc.get(element)
      if (!a) continue
      let { n, sum, sumSq } = a
      const v = left?.elements[element]
      if (typeof v === 'number' && Number.isFinite(v)) {
        const d = v - a.shift
        n -= 1
        sum -= d
        sumSq -= d * d
      }
      if (n === 0) continue
      const meanShifted = sum / n
      const sd = n >= 2 ? Math.sqrt(Math.max(0, (sumSq - n * meanShifted * meanShifted) / (n - 1))) : 0
      const mean = a.shift + meanShifted
      out.push({ element, n, mean, sd, caution: mean + st.cautionSigma * sd, critical: mean + st.criticalSigma * sd, active: st.enabled && n >= st.minSamples })
    }
    return out
  }
}

/**
 * Every sample of one engine, oldest first, each assessed against the sample
 * before it and the population of its engine type (the sample itself left out).
 */
export function assessEngineHistory(history: OilSampleValues[], limits: OilLimits, population: OilSampleValues[]): AssessedSample[] {
  const sorted = sortSamples(history)
  const popFor = leaveOneOutLimits(population, limits)
  return sorted.map((values, i) => {
    const previous = i > 0 ? sorted[i - 1]! : null
    return { values, previousSampleId: previous?.sampleId ?? null, assessment: assessSample(values, previous, limits, popFor(values.sampleId)) }
  })
}

/** Only the latest sample of an engine, assessed as in assessEngineHistory; null without samples. */
export function assessLatest(history: OilSampleValues[], limits: OilLimits, population: OilSampleValues[], popFor = leaveOneOutLimits(population, limits)): AssessedSample | null {
  if (history.length === 0) return null
  const sorted = sortSamples(history)
  const values = sorted[sorted.length - 1]!
  const previous = sorted.length > 1 ? sorted[sorted.length - 2]! : null
  return { values, previousSampleId: previous?.sampleId ?? null, assessment: assessSample(values, previous, limits, popFor(values.sampleId)) }
}
