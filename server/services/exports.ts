// CSV exports (written by csvAnswer through toCsv) of what a page shows: a teardown's measurements and a part's back-to-birth history.
// They read through the same services as the pages, so scoping (another team's record: 404) is theirs.
import type { Knex } from 'knex'
import type { Actor } from '../utils/guard'
import type { CsvTable } from '../utils/csv-answer'
import { teardownDetail } from './teardowns/sheet'
import { partHistory } from './part-history'

const VERDICT_WORD: Record<string, string> = { in: 'in tolerance', low: 'out: low', high: 'out: high', implausible: 'implausible' }

export const TEARDOWN_CSV_COLUMNS = ['teardown', 'engine', 'position', 'serial', 'removed', 'characteristic', 'unit', 'nominal', 'min', 'max', 'value', 'verdict', 'measured_by', 'measured_at_utc'] as const

/** Every reading of one teardown, one row each, in the order of the engine type's positions. */
export async function teardownMeasurementsCsv(db: Knex, actor: Actor, id: number): Promise<CsvTable<any>> {
  const td = await teardownDetail(db, actor, id)
  const rows = td.parts.flatMap((p) =>
    p.rows
      .filter((r) => r.measurement)
      .map((r) => ({
        teardown: td.id,
        engine: td.engine.serial,
        position: p.positionLabel,
        serial: p.serial,
        removed: p.removed,
        characteristic: r.label,
        unit: r.unit,
        nominal: r.nominal,
        min: r.min,
        max: r.max,
        value: r.measurement!.value,
        verdict: VERDICT_WORD[r.measurement!.verdict] ?? r.measurement!.verdict,
        measured_by: r.measurement!.measuredByName,
        measured_at_utc: r.measurement!.at,
      })),
  )
  return { fileName: `teardown-${td.id}-${td.engine.serial}-measurements.csv`, rows, columns: TEARDOWN_CSV_COLUMNS }
}

export const PART_HISTORY_CSV_COLUMNS = ['record', 'from_utc', 'to_utc', 'engine', 'position', 'event', 'session_kind', 'running_h', 'distance_km'] as const

const round = (x: number, digits: number) => Number(x.toFixed(digits))

/** Installations and the sessions run, in time order (an installation before the sessions it starts). */
export async function partHistoryCsv(db: Knex, actor: Actor, id: number): Promise<CsvTable<any>> {
  const h = await partHistory(db, actor, id)
  const rows = [
    ...h.installations.map((i) => ({ record: 'installed', from_utc: i.from, to_utc: i.to, engine: i.engineSerial, position: i.position, event: null, session_kind: null, running_h: null, distance_km: null })),
    ...h.sessions.map((s) => ({ record: 'session', from_utc: s.at, to_utc: null, engine: s.engineSerial ?? null, position: null, event: s.eventName, session_kind: s.kind ?? null, running_h: round(s.runningSeconds / 3600, 3), distance_km: round(s.distanceKm, 1) })),
  ]
  rows.sort((a, b) => String(a.from_utc).localeCompare(String(b.from_utc)) || (a.record === 'installed' ? -1 : 1) - (b.record === 'installed' ? -1 : 1))
  return { fileName: `part-${h.part.serial}-history.csv`, rows, columns: PART_HISTORY_CSV_COLUMNS }
}
