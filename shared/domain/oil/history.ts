/**
 * Assessment of an engine's sample history: each sample against the limits,
 * the engine's previous sample (rate) and the population of its engine type.
 */
import { assessSample, populationLimits, type OilLimits, type OilSampleValues, type PopulationLimit, type SampleAssessment } from './limits'

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
 * Every sample of one engine, oldest first, each assessed against the sample
 * before it and the population of its engine type (the sample itself left out).
 */
export function assessEngineHistory(history: OilSampleValues[], limits: OilLimits, population: OilSampleValues[]): AssessedSample[] {
  const sorted = sortSamples(history)
  return sorted.map((values, i) => {
    const previous = i > 0 ? sorted[i - 1]! : null
    const pop = populationLimitsExcluding(population, values.sampleId, limits)
    return { values, previousSampleId: previous?.sampleId ?? null, assessment: assessSample(values, previous, limits, pop) }
  })
}

/** Only the latest sample of an engine, assessed as in assessEngineHistory; null without samples. */
export function assessLatest(history: OilSampleValues[], limits: OilLimits, population: OilSampleValues[]): AssessedSample | null {
  if (history.length === 0) return null
  const sorted = sortSamples(history)
  const values = sorted[sorted.length - 1]!
  const previous = sorted.length > 1 ? sorted[sorted.length - 2]! : null
  const pop = populationLimitsExcluding(population, values.sampleId, limits)
  return { values, previousSampleId: previous?.sampleId ?? null, assessment: assessSample(values, previous, limits, pop) }
}
