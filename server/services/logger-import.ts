// A session from a logger file: one streaming pass (analysis, SHA-256 and a gzip copy of the raw
// file side by side), then one transaction; the raw file is kept for re-processing and is never
// left behind when the import fails.
import { createGunzip, createGzip } from 'node:zlib'
import { PassThrough, Readable, Transform } from 'node:stream'
import type { Knex } from 'knex'
import type { LoggerMapping } from '#shared/domain/logger-mapping'
import type { TraceConfig } from '#shared/domain/trace'
import { storedOverview } from '#shared/domain/trace/chart'
import { OVER_REV_JSON_BUDGET } from '#shared/domain/trace/events'
import type { OverRevEvent } from '#shared/domain/over-rev'
import type { EngineTypeDto } from '#shared/types/fleet'
import { scopeQuery, type Actor } from '../utils/guard'
import { announceLifeChanged } from '../utils/life-events'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { fileSink, fileSource, newFileKey, removeFile } from '../utils/file-store'
import { finishedUpload, removeUpload } from '../utils/uploads'
import { committedAfterLoss, isUnavailableAnswer } from '../utils/commit-check'
import { bumpLifeRevision, loadEngineTypes, toSessionDto } from './fleet-data'
import { checkSession, insertSession, momentsColumn, sessionById } from './sessions'
import { analyzeLoggerStream, LoggerImportError, type LoggerImportResult } from './logger-csv'
import { engineRowFor } from './engine-rows'


export interface ImportMeta {
  engineId: number
  eventId: number | null
  kind: 'practice' | 'qualifying' | 'race' | 'test' | 'bench'
  startedAt: string
  /** files a session a few days outside its event's dates (see shared/domain/session-date.ts) */
  confirmDate?: boolean
  laps: number | null
  fileName: string
  mapping: LoggerMapping
}

export function traceConfigFor(t: EngineTypeDto, trackLengthKm: number | null, laps: number | null): TraceConfig {
  return {
    idleRpm: t.idleRpm,
    bandWidthRpm: t.bandWidthRpm,
    maxGapS: t.maxGapS,
    overRevBands: t.overRevBands,
    lowOilPressure: t.lowOilPressure,
    trackLengthKm,
    laps,
  }
}

/**
 * Analyses the stream and keeps a gzip copy of the raw file under `fileKey`, streamed into
 * storage as it is read (never whole in memory). A file sent gzip-compressed is kept as sent
 * and decompressed only for the analysis, whose SHA-256 is then of the uncompressed content, as
 * for a plain upload: one file sent both ways is one file. On failure nothing is left stored.
 */
async function analyzeAndStore(input: Readable, gzipped: boolean, fileKey: string, mapping: LoggerMapping, cfg: TraceConfig, maxBytes: number) {
  const sink = await fileSink(fileKey)
  const packer = gzipped ? new PassThrough({ highWaterMark: 1 << 20 }) : createGzip({ level: 1, chunkSize: 1 << 20 })
  packer.pipe(sink.stream)
  const stored = sink.done
  stored.catch(() => {}) // awaited below; a failure before then is the analysis' to report
  // Every chunk goes to the packer and on to the analyser; backpressure from either holds the input.
  const tee = new Transform({
    // Room for a few MiB between reader, packer and analyser so that none waits on the others.
    highWaterMark: 4 << 20,
    transform(chunk: Buffer, _enc, done) {
      if (packer.write(chunk)) done(null, chunk)
      else packer.once('drain', () => done(null, chunk))
    },
    flush(done) {
      packer.end()
      done()
    },
  })
  input.on('error', (e) => tee.destroy(e))
  input.pipe(tee)
  let text: Readable = tee
  if (gzipped) {
    const unpack = createGunzip({ chunkSize: 1 << 16 })
    tee.on('error', (e) => unpack.destroy(e))
    unpack.on('error', () => {}) // read by the analysis below
    text = tee.pipe(unpack)
  }
  try {
    const result = await analyzeLoggerStream(text, mapping, cfg, { maxBytes })
    await stored
    return result
  } catch (error) {
    // Drain what the client still sends so that it receives the answer.
    input.unpipe(tee)
    input.resume()
    packer.destroy()
    sink.stream.destroy()
    await stored.catch(() => {})
    await removeFile(fileKey).catch(() => {})
    throw gzipError(error) ?? error
  }
}

/** zlib's errors for a corrupt or cut-off gzip stream, as a refusal that says so. */
function gzipError(error: unknown): LoggerImportError | null {
  const code = (error as { code?: string })?.code ?? ''
  if (!code.startsWith('Z_') && code !== 'ERR_ZLIB_INITIALIZATION_FAILED') return null
  const what = code === 'Z_BUF_ERROR' ? 'it ends before the compressed data does (truncated)' : `the compressed data is corrupt (${(error as Error).message})`
  return new LoggerImportError('bad_gzip', `The file is not a readable gzip stream: ${what}`)
}

function importErrorToHttp(error: unknown): never {
  if (error instanceof LoggerImportError) {
    throw createError({ statusCode: error.status, statusMessage: error.status === 413 ? 'Payload Too Large' : 'Bad Request', message: error.message, data: { code: error.code, row: error.row, column: error.column } })
  }
  throw error
}

/**
 * The analysis already left the profiles out when the events with them passed the budget (see
 * OVER_REV_JSON_BUDGET); past the budget even without them, the file is refused rather than stored
 * in part.
 */
function boundedOverRevs(events: OverRevEvent[]): OverRevEvent[] {
  if (JSON.stringify(events).length <= OVER_REV_JSON_BUDGET) return events
  badRequest(`Invalid input: file: ${events.length} over-rev events in one session; check that the file belongs to this engine type and that the rpm column is mapped right`)
}

function sessionFields(r: LoggerImportResult) {
  const s = r.summary
  return {
    runningSeconds: s.runningSeconds,
    distanceKm: s.distanceKm,
    histogram: s.histogram,
    overRevs: boundedOverRevs(s.overRevs),
    extras: {
      rpmMoments: s.rpmMoments,
      lowOilPressure: s.lowOilPressure,
      maxRpm: Math.round(s.maxRpm),
      maxOilTempC: s.maxOilTempC,
      maxWaterTempC: s.maxWaterTempC,
      maxSpeedKmh: s.maxSpeedKmh,
      minOilPressureBar: s.minOilPressureBar,
      traceOverview: storedOverview(s.channels),
    },
    details: {
      rows: r.rows,
      skippedRows: r.skippedRows,
      warnings: r.warnings,
      delimiter: r.delimiter,
      header: r.header,
      preamble: r.preamble,
      units: r.units,
      distanceSource: s.distanceSource,
      gaps: s.gaps.slice(0, 100),
      gapCount: (s as any).gapCount ?? s.gaps.length,
      durationS: s.durationS,
      overview: s.overview,
    },
  }
}

export interface LoggerUpload {
  body: Readable
  /** The request's content-length, 0 when not given. */
  declaredBytes: number
  maxBytes: number
  /** the body is the file gzip-compressed (content-encoding: gzip) */
  gzipped?: boolean
}

/** Stores a streamed logger file as a session, then announces that life changed (the life check runs in the background). */
export async function importLoggerFile(db: Knex, actor: Actor, meta: ImportMeta, upload: LoggerUpload) {
  const { declaredBytes, maxBytes } = upload
  if (declaredBytes > maxBytes) {
    throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: `The file is ${(declaredBytes / 1048576).toFixed(0)} MiB; the limit is ${(maxBytes / 1048576).toFixed(0)} MiB` })
  }
  const result = await storeLoggerFile(db, actor, meta, upload.body, maxBytes, upload.gzipped ?? false)
  announceLifeChanged()
  return result
}

/**
 * Imports a finished resumable upload (server/utils/uploads.ts) as a session, the same way as a
 * streamed one; the upload is removed once the session is stored. When the import is refused
 * the upload stays (to be imported again with a corrected mapping) until it expires.
 */
export async function importFinishedUpload(db: Knex, actor: Actor, uploadId: string, meta: ImportMeta, maxBytes: number) {
  const upload = await finishedUpload(uploadId, actor)
  if (!upload) notFound('Upload')
  if (upload.size > maxBytes) {
    throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: `The file is ${(upload.size / 1048576).toFixed(0)} MiB; the limit is ${(maxBytes / 1048576).toFixed(0)} MiB` })
  }
  const result = await storeLoggerFile(db, actor, meta, upload.open(), maxBytes, upload.gzipped)
  await removeUpload(uploadId)
  announceLifeChanged()
  return result
}

async function storeLoggerFile(db: Knex, actor: Actor, meta: ImportMeta, body: Readable, maxBytes: number, gzipped: boolean) {
  // Check what can be checked before reading the file: engine, event, role scope.
  const engine = await engineRowFor(db, actor, meta.engineId)
  const [type] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  let trackLengthKm: number | null = null
  if (meta.eventId !== null) {
    const ev = await db('events').where('id', meta.eventId).first()
    if (!ev || ev.supplier_id !== engine.supplier_id) notFound('Event')
    trackLengthKm = Number(ev.track_length_km)
  }
  const cfg = traceConfigFor(type!, trackLengthKm, meta.laps)

  const fileKey = newFileKey('logger', 'csv.gz')
  let result: LoggerImportResult
  try {
    result = await analyzeAndStore(body, gzipped, fileKey, meta.mapping, cfg, maxBytes)
  } catch (error) {
    importErrorToHttp(error)
  }
  const f = sessionFields(result)
  const answer = async (q: Knex | Knex.Transaction, id: number) => ({ session: toSessionDto(await sessionById(q, id)), rows: result.rows, skippedRows: result.skippedRows, warnings: result.warnings, gaps: result.summary.gaps.length })
  // Set once the transaction's work is done and its COMMIT goes out: only a connection lost after
  // that leaves the outcome unknown. Lost before, nothing was committed and the file goes.
  let committing = false
  try {
    return await db.transaction(async (trx) => {
      // A duplicate is looked for only among the sessions this user may see, and named only then.
      // Another team may hold the same file (a shared test): that is neither refused nor hinted at.
      const existing = await scopeQuery(trx('sessions as s').join('engines as e', 'e.id', 's.engine_id').where('s.file_sha256', result.sha256).whereNull('s.voided_at'), actor, { supplier: 'e.supplier_id', team: 's.team_id' })
        .orderBy('s.id')
        .first('s.id', 's.started_at', 's.kind', 'e.serial')
      if (existing) {
        conflict(`This file was already imported as session ${existing.id} (${existing.kind}, ${existing.serial}, ${new Date(existing.started_at).toISOString().slice(0, 16).replace('T', ' ')} UTC)`, { sessionId: existing.id })
      }
      const input = { engineId: meta.engineId, eventId: meta.eventId, kind: meta.kind, startedAt: meta.startedAt, runningSeconds: f.runningSeconds, distanceKm: f.distanceKm, histogram: f.histogram, overRevs: f.overRevs, confirmDate: meta.confirmDate ?? false }
      const { engine: locked, type: t } = await checkSession(trx, actor, input, { exactBands: false })
      const id = await insertSession(trx, actor, input, locked, t, {
        ...f.extras,
        source: 'logger',
        fileKey,
        fileName: meta.fileName.slice(0, 255),
        fileSha256: result.sha256,
        details: { ...f.details, mapping: meta.mapping, laps: meta.laps, bytes: result.bytes },
      })
      const stored = await answer(trx, id)
      committing = true
      return stored
    })
  } catch (error) {
    if (committing && isUnavailableAnswer(error)) {
      // The database went away around the commit: the session either landed whole or not at all.
      const landed = await committedAfterLoss(db, async (q) => Boolean(await q('sessions').where('file_key', fileKey).first('id')))
      if (landed) return answer(db, (await db('sessions').where('file_key', fileKey).first('id')).id)
      // Not known yet: the file stays, since a session may turn out to name it.
      if (landed === null) throw error
    }
    // the file was stored before the transaction: nothing of this import may stay
    await removeFile(fileKey).catch(() => {})
    // Two imports of one file into one scope at the same moment: the unique index keeps one.
    if ((error as { code?: string }).code === 'ER_DUP_ENTRY' && String((error as Error).message).includes('sessions_file_scope_sha256_unique')) {
      conflict('This file was imported by another request a moment ago')
    }
    throw error
  }
}

/** Re-reads a stored file with the engine type's current bands and replaces the session's numbers. */
export async function reprocessSession(db: Knex, actor: Actor, sessionId: number, maxBytes: number) {
  const row = await sessionById(db, sessionId)
  if (!row) notFound('Session')
  await engineRowFor(db, actor, row.engine_id)
  const session = await reprocessStoredFile(db, actor, row, maxBytes)
  announceLifeChanged()
  return session
}

/**
 * Sessions stored before rpm moments were kept are read again from their kept raw files, once,
 * so that their equivalent hours become exact. Runs at start on one instance (named lock);
 * audited as the system. A session whose file cannot be read stays as it was and is reported.
 */
export async function reprocessSessionsWithoutMoments(db: Knex, maxBytes: number, log: (m: string) => void) {
  const [[lock]] = await db.raw("SELECT GET_LOCK('crankledger-exact-life', 0) AS ok")
  if (Number(lock?.ok) !== 1) return { done: 0, failed: 0 }
  let done = 0
  let failed = 0
  try {
    const ids: number[] = (await db('sessions').where('source', 'logger').whereNull('rpm_moments').whereNotNull('file_key').orderBy('id').pluck('id'))
    for (const id of ids) {
      try {
        await reprocessStoredFile(db, null, await sessionById(db, id), maxBytes)
        done++
      } catch (e: any) {
        failed++
        log(`session ${id} keeps its band figures: ${e?.message ?? e}`)
      }
    }
  } finally {
    await db.raw("SELECT RELEASE_LOCK('crankledger-exact-life')")
  }
  return { done, failed }
}

async function reprocessStoredFile(db: Knex, actor: Actor | null, row: any, maxBytes: number) {
  const sessionId: number = row.id
  if (row.source !== 'logger' || !row.file_key) badRequest('Only sessions imported from a logger file can be re-processed')
  const raw = await fileSource(row.file_key)
  if (!raw) conflict('The stored logger file is missing; the session cannot be re-processed')
  const details = typeof row.details === 'string' ? JSON.parse(row.details) : row.details
  const engine = await db('engines').where('id', row.engine_id).first()
  const [type] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const ev = row.event_id ? await db('events').where('id', row.event_id).first() : null
  const cfg = traceConfigFor(type!, ev ? Number(ev.track_length_km) : null, details?.laps ?? null)
  let result: LoggerImportResult
  try {
    // decompressed as it is read: a 6 h file is never whole in memory
    const unpacked = createGunzip()
    raw.on('error', (e) => unpacked.destroy(e))
    result = await analyzeLoggerStream(raw.pipe(unpacked), details.mapping, cfg, { maxBytes })
  } catch (error) {
    importErrorToHttp(error)
  }
  const f = sessionFields(result)
  return db.transaction(async (trx) => {
    const before = await trx('sessions').where('id', sessionId).forUpdate().first()
    await trx('sessions').where('id', sessionId).update({
      running_seconds: f.runningSeconds,
      distance_km: f.distanceKm,
      band_width_rpm: type!.bandWidthRpm,
      histogram: JSON.stringify(f.histogram),
      rpm_moments: momentsColumn(f.extras.rpmMoments),
      eq_cache: null, // evaluated again from the new moments by the next fleet computation
      over_revs: JSON.stringify(f.overRevs),
      low_oil_pressure: JSON.stringify(f.extras.lowOilPressure),
      max_rpm: f.extras.maxRpm,
      max_oil_temp_c: f.extras.maxOilTempC,
      max_water_temp_c: f.extras.maxWaterTempC,
      max_speed_kmh: f.extras.maxSpeedKmh,
      min_oil_pressure_bar: f.extras.minOilPressureBar,
      details: JSON.stringify({ ...details, ...f.details }),
      trace_overview: JSON.stringify(f.extras.traceOverview),
    })
    await audit(trx, actor, {
      entity: 'session',
      entityId: sessionId,
      action: 'reprocess',
      before: { runningSeconds: Number(before.running_seconds), distanceKm: Number(before.distance_km), bandWidthRpm: before.band_width_rpm, histogram: before.histogram, overRevs: before.over_revs },
      after: { runningSeconds: f.runningSeconds, distanceKm: f.distanceKm, bandWidthRpm: type!.bandWidthRpm, histogram: f.histogram, overRevs: f.overRevs },
    })
    await bumpLifeRevision(trx)
    return toSessionDto(await sessionById(trx, sessionId))
  })
}
