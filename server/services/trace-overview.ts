// Logger sessions stored before every channel's range was kept get it from their kept raw file.
// Only the overview is written: the session's figures (running time, events, life) stay as they
// were, so nothing is audited and life is not recomputed.
import { createGunzip } from 'node:zlib'
import type { Knex } from 'knex'
import { storedOverview } from '#shared/domain/trace/chart'
import { getFile } from '../utils/file-store'
import { loadEngineTypes } from './fleet-data'
import { analyzeLoggerStream } from './logger-csv'
import { traceConfigFor } from './logger-import'

const LOCK = 'crankledger-trace-overview'

async function overviewFromKeptFile(db: Knex, row: any, maxBytes: number) {
  const raw = await getFile(row.file_key)
  if (!raw) throw new Error('the stored logger file is missing')
  const details = typeof row.details === 'string' ? JSON.parse(row.details) : row.details
  if (!details?.mapping) throw new Error('the column mapping it was read with was not kept')
  const engine = await db('engines').where('id', row.engine_id).first()
  const [type] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const ev = row.event_id ? await db('events').where('id', row.event_id).first() : null
  const cfg = traceConfigFor(type!, ev ? Number(ev.track_length_km) : null, details.laps ?? null)
  // decompressed as it is read: a long file is never whole in memory
  const unpacked = createGunzip()
  unpacked.end(raw)
  const result = await analyzeLoggerStream(unpacked, details.mapping, cfg, { maxBytes })
  return storedOverview(result.summary.channels)
}

/** Runs once at start on one instance (named lock); a session whose file cannot be read keeps the rpm-only overview and is reported. */
export async function fillMissingTraceOverviews(db: Knex, maxBytes: number, log: (m: string) => void) {
  const [[lock]] = await db.raw('SELECT GET_LOCK(?, 0) AS ok', [LOCK])
  if (Number(lock?.ok) !== 1) return { done: 0, failed: 0 }
  let done = 0
  let failed = 0
  try {
    const ids: number[] = await db('sessions').where('source', 'logger').whereNull('trace_overview').whereNotNull('file_key').orderBy('id').pluck('id')
    for (const id of ids) {
      try {
        const row = await db('sessions').where('id', id).first('id', 'file_key', 'details', 'engine_id', 'event_id')
        if (!row) continue
        const overview = await overviewFromKeptFile(db, row, maxBytes)
        // a re-process or import meanwhile wrote a fresh one: keep it
        await db('sessions').where('id', id).whereNull('trace_overview').update({ trace_overview: JSON.stringify(overview) })
        done++
      } catch (e: any) {
        failed++
        log(`session ${id} keeps its rpm-only overview: ${e?.message ?? e}`)
      }
    }
  } finally {
    await db.raw('SELECT RELEASE_LOCK(?)', [LOCK])
  }
  return { done, failed }
}
