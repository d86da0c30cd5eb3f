/**
 * Lab CSV layouts: which column of a lab's export holds which sample field.
 * Shared by the browser preview and the server import, so both read a file
 * the same way.
 */
import { OIL_ELEMENTS } from './limits'
import { particlesPerMl } from './iso4406'

export const OIL_CSV_FIELDS = [
  'engineSerial', 'sampleId', 'sampledAt', 'engineHours', 'oilHours', 'grade', 'oilChanged',
  'kv40', 'kv100', 'hths', 'fuelDilutionPct', 'waterPct', 'p4', 'p6', 'p14',
  ...OIL_ELEMENTS,
] as const
export type OilCsvField = typeof OIL_CSV_FIELDS[number]

/** Column header -> field; a header left out (or mapped to 'ignore') is not read. */
export type OilCsvMapping = Record<string, OilCsvField | 'ignore'>

export function normaliseHeader(h: string): string {
  return h.trim().toLowerCase().replace(/[\s_\-./()[\]]+/g, ' ').trim()
}

/** 32-bit FNV-1a of a string's UTF-8 bytes, as 8 hex digits. */
export function fnv1a32(text: string): string {
  let hash = 0x811c9dc5
  for (const byte of new TextEncoder().encode(text)) {
    hash ^= byte
    hash = Math.imul(hash, 0x01000193) >>> 0
  }
  return hash.toString(16).padStart(8, '0')
}

/** Identifies a lab layout by its header row, whatever the case, spacing or column order. */
export function headerSignature(headers: string[]): string {
  const names = headers.map(normaliseHeader).filter((h) => h !== '').sort()
  return `${names.length}-${fnv1a32(names.join('\u0001'))}`
}

const ALIASES: Record<string, OilCsvField> = {
  'engine': 'engineSerial', 'engine serial': 'engineSerial', 'serial': 'engineSerial', 'unit': 'engineSerial', 'unit id': 'engineSerial',
  'sample': 'sampleId', 'sample id': 'sampleId', 'sample no': 'sampleId', 'sample number': 'sampleId', 'lab no': 'sampleId',
  'date': 'sampledAt', 'sampled': 'sampledAt', 'sampled at': 'sampledAt', 'sample date': 'sampledAt', 'date sampled': 'sampledAt',
  'engine hours': 'engineHours', 'unit hours': 'engineHours', 'hours': 'engineHours',
  'oil hours': 'oilHours', 'oil age': 'oilHours', 'hours on oil': 'oilHours',
  'grade': 'grade', 'oil grade': 'grade', 'viscosity grade': 'grade',
  'oil changed': 'oilChanged', 'oil change': 'oilChanged',
  'kv40': 'kv40', 'visc 40': 'kv40', 'visc 40c': 'kv40', 'viscosity 40': 'kv40', 'viscosity 40c': 'kv40',
  'kv100': 'kv100', 'visc 100': 'kv100', 'visc 100c': 'kv100', 'viscosity 100': 'kv100', 'viscosity 100c': 'kv100',
  'hths': 'hths', 'hths 150': 'hths', 'hths 150c': 'hths', 'hths viscosity': 'hths', 'hths mpa s': 'hths', 'hths cp': 'hths',
  'fuel': 'fuelDilutionPct', 'fuel dilution': 'fuelDilutionPct', 'fuel %': 'fuelDilutionPct', 'fuel dilution %': 'fuelDilutionPct',
  'water': 'waterPct', 'water %': 'waterPct',
  'p4': 'p4', '4 um': 'p4', '>4 um': 'p4', 'p6': 'p6', '6 um': 'p6', '>6 um': 'p6', 'p14': 'p14', '14 um': 'p14', '>14 um': 'p14',
}

/** A first guess at a mapping from header names; the user confirms it in the preview. */
export function guessMapping(headers: string[]): OilCsvMapping {
  const out: OilCsvMapping = {}
  const taken = new Set<OilCsvField>()
  for (const h of headers) {
    const n = normaliseHeader(h)
    const bare = n.replace(/\s*ppm$/, '')
    const element = OIL_ELEMENTS.find((e) => e.toLowerCase() === bare)
    const field: OilCsvField | undefined = element ?? ALIASES[n] ?? ALIASES[bare]
    if (field && !taken.has(field)) {
      out[h] = field
      taken.add(field)
    } else out[h] = 'ignore'
  }
  return out
}

/** Problems with a mapping against a header row: unknown columns, a field mapped twice, required fields missing. */
export function mappingProblems(headers: string[], mapping: OilCsvMapping): string[] {
  const problems: string[] = []
  const seen = new Map<string, string>()
  for (const [column, field] of Object.entries(mapping)) {
    if (field === 'ignore') continue
    if (!headers.includes(column)) problems.push(`mapping: column "${column}" is not in the file`)
    if (!(OIL_CSV_FIELDS as readonly string[]).includes(field)) problems.push(`mapping: "${field}" is not a sample field`)
    const before = seen.get(field)
    if (before !== undefined) problems.push(`mapping: ${field} is mapped from both "${before}" and "${column}"`)
    seen.set(field, column)
  }
  for (const required of ['engineSerial', 'sampleId', 'sampledAt'] as const) {
    if (!seen.has(required)) problems.push(`mapping: no column is mapped to ${required}`)
  }
  return problems
}

/** One CSV row (cells in header order) as a flat sample record keyed by field. */
export function applyMapping(headers: string[], cells: string[], mapping: OilCsvMapping): Partial<Record<OilCsvField, string>> {
  const out: Partial<Record<OilCsvField, string>> = {}
  headers.forEach((h, i) => {
    const field = mapping[h]
    if (!field || field === 'ignore') return
    out[field] = (cells[i] ?? '').trim()
  })
  return out
}

// ------------------------------------------------------ particle counts

/**
 * Volume a lab's particle counts refer to. ISO 4406 scale numbers are defined
 * per mL; many labs print counts per 100 mL, which read as per mL would be a
 * hundred times too dirty (about seven scale numbers).
 */
export const PARTICLE_BASES = ['per_ml', 'per_100ml'] as const
export type ParticleBasis = typeof PARTICLE_BASES[number]
export const PARTICLE_BASIS_ML: Record<ParticleBasis, number> = { per_ml: 1, per_100ml: 100 }
export const PARTICLE_BASIS_LABEL: Record<ParticleBasis, string> = { per_ml: 'per mL', per_100ml: 'per 100 mL' }
export const DEFAULT_PARTICLE_BASIS: ParticleBasis = 'per_ml'

const PARTICLE_FIELDS = ['p4', 'p6', 'p14'] as const

/**
 * A mapped row with its particle counts turned into particles per mL. A cell
 * that is empty or not a plain non-negative number is passed on untouched, so
 * the sample schema names it as it would any other bad cell.
 */
export function countsPerMl(record: Partial<Record<OilCsvField, string>>, basis: ParticleBasis): Partial<Record<OilCsvField, string>> {
  const volume = PARTICLE_BASIS_ML[basis]
  if (volume === 1) return record
  const out = { ...record }
  for (const f of PARTICLE_FIELDS) {
    const cell = out[f]
    if (cell === undefined || cell.trim() === '') continue
    const n = Number(cell.trim())
    if (!Number.isFinite(n) || n < 0) continue
    out[f] = String(particlesPerMl(n, volume))
  }
  return out
}
