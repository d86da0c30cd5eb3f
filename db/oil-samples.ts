// Oil sample rows <-> domain values; no Nitro here, so the demo seed writes samples the same way.
import type { Knex } from 'knex'
import { OIL_ELEMENTS, type OilSampleValues } from '#shared/domain/oil/limits'
import { iso, json, numOrNull } from './values'

// ------------------------------------------------------------------ rows

export interface SampleRow {
  id: number
  engine_id: number
  sample_id: string
  lab: string | null
  sampled_at: Date | string
  engine_hours: string | null
  oil_hours: string | null
  oil_grade: string | null
  oil_changed: number | boolean
  elements: unknown
  kv40: string | null
  kv100: string | null
  hths: string | null
  fuel_dilution_pct: string | null
  water_pct: string | null
  p4: string | null
  p6: string | null
  p14: string | null
  counted_particles: unknown
  source: 'form' | 'csv' | 'seed'
  attachment_key: string | null
  attachment_name: string | null
  attachment_size: number | null
  created_at: Date | string | null
  /** raised by every correction; a client names the one it last saw */
  version?: number
}

export function sampleValues(row: SampleRow): OilSampleValues {
  const raw = json<Record<string, unknown>>(row.elements, {})
  const elements: OilSampleValues['elements'] = {}
  for (const e of OIL_ELEMENTS) {
    const v = raw[e]
    if (v !== null && v !== undefined && Number.isFinite(Number(v))) elements[e] = Number(v)
  }
  const values: OilSampleValues = {
    sampleId: row.sample_id,
    sampledAt: iso(row.sampled_at)!,
    engineHours: numOrNull(row.engine_hours),
    oilHours: numOrNull(row.oil_hours),
    elements,
    kv40: numOrNull(row.kv40),
    kv100: numOrNull(row.kv100),
    hths: numOrNull(row.hths),
    fuelDilutionPct: numOrNull(row.fuel_dilution_pct),
    waterPct: numOrNull(row.water_pct),
    p4: numOrNull(row.p4),
    p6: numOrNull(row.p6),
    p14: numOrNull(row.p14),
    grade: row.oil_grade,
  }
  if (row.oil_changed) values.oilChanged = true
  const counted = json<OilSampleValues['countedParticles'] | null>(row.counted_particles, null)
  if (counted) values.countedParticles = counted
  return values
}

function sampleInsertRow(engineId: number, s: OilSampleValues, extra: { lab: string | null; source: 'form' | 'csv' | 'seed'; createdBy: number | null }) {
  return {
    engine_id: engineId,
    sample_id: s.sampleId,
    lab: extra.lab,
    sampled_at: new Date(s.sampledAt),
    engine_hours: s.engineHours,
    oil_hours: s.oilHours,
    oil_grade: s.grade,
    oil_changed: s.oilChanged ?? false,
    elements: JSON.stringify(s.elements),
    kv40: s.kv40,
    kv100: s.kv100,
    hths: s.hths,
    fuel_dilution_pct: s.fuelDilutionPct,
    water_pct: s.waterPct,
    p4: s.p4,
    p6: s.p6,
    p14: s.p14,
    counted_particles: s.countedParticles ? JSON.stringify(s.countedParticles) : null,
    source: extra.source,
    created_by: extra.createdBy,
  }
}

/** The columns a correction may change: the figures and the lab, never the engine, the source or who entered it. */
export function sampleUpdateRow(s: OilSampleValues, lab: string | null) {
  const { engine_id: _e, source: _s, created_by: _c, ...row } = sampleInsertRow(0, s, { lab, source: 'form', createdBy: null })
  return row
}

/** Inserts validated samples (used by the form, the import and the demo seed). */
export async function insertSamples(trx: Knex.Transaction, rows: { engineId: number; values: OilSampleValues; lab: string | null; source: 'form' | 'csv' | 'seed' }[], createdBy: number | null): Promise<number[]> {
  const ids: number[] = []
  for (const r of rows) {
    const [id] = await trx('oil_samples').insert(sampleInsertRow(r.engineId, r.values, { lab: r.lab, source: r.source, createdBy }))
    ids.push(id!)
  }
  return ids
}

