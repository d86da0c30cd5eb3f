// A session from a logger file: one streaming pass (analysis, SHA-256 and a gzip copy of the raw
// file side by side), then one transaction; the raw file is kept for re-processing and is never
// left behind when the import fails.
import { createGunzip, createGzip } from 'node:zlib'
import { Readable, Transform } from 'node:stream'
import type { Knex } from 'knex'
import type { LoggerMapping } from '#shared/domain/logger-mapping'
import type { TraceConfig } from '#shared/domain/trace'
import type { OverRevEvent } from '#shared/domain/over-rev'
import type { EngineTypeDto } from '#shared/types/fleet'
import { scopeQuery, type Actor } from '../utils/guard'
import { announceLifeChanged } from '../utils/life-events'
import { audit } from '../utils/audit'
import { badRequest, conflict, notFound } from '../utils/errors'
import { getFile, newFileKey, putFile, removeFile } from '../utils/file-store'
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

/** Analyses the stream and keeps a gzip copy of the raw bytes (a fraction of the file's size). */
async function analyzeAndCompress(input: Readable, mapping: LoggerMapping, cfg: TraceConfig, maxBytes: number) {
  const gzip = createGzip({ level: 1, chunkSize: 1 << 20 })
  const chunks: Buffer[] = []
  gzip.on('data', (c: Buffer) => chunks.push(c))
  const gzipDone = new Promise<void>((resolve, reject) => {
    gzip.on('end', resolve)
    gzip.on('error', reject)
  })
  // Every chunk goes to the compressor and on to the analyser; backpressure from either holds the input.
  const tee = new Transform({
    // Room for a few MiB between reader, compressor and analyser so that none waits on the others.
    highWaterMark: 4 << 20,
    transform(chunk: Buffer, _enc, done) {
      if (gzip.write(chunk)) done(null, chunk)
      else gzip.once('drain', () => done(null, chunk))
    },
    flush(done) {
      gzip.end()
      done()
    },
  })
  input.on('error', (e) => tee.destroy(e))
  input.pipe(tee)
  try {
    const result = await analyzeLoggerStream(tee, mapping, cfg, { maxBytes })
    await gzipDone
    return { result, compressed: Buffer.concat(chunks) }
  } catch (error) {
    // Drain what the client still sends so that it receives the answer.
    input.unpipe(tee)
    input.resume()
    gzip.destroy()
    throw error
  }
}

function importErrorToHttp(error: unknown): never {
  if (error instanceof LoggerImportError) {
    throw createError({ statusCode: error.status, statusMessage: error.status === 413 ? 'Payload Too Large' : 'Bad Request', message: error.message, data: { code: error.code, row: error.row, column: error.column } })
  }
  throw error
}

/** Over-rev events of one session as stored: well under the database's 16 MiB packet. */
const MAX_OVER_REV_BYTES = 4 << 20

/**
 * A trace that sits above the over-rev thresholds for hours (a file read against the wrong engine
 * type, an engine on its limiter) can hold thousands of long excursions. Their time-at-rpm profiles
 * only serve re-classification after a band edit, so beyond the budget they are left out (those
 * events keep their verdict and their time above each band); past the budget even without them,
 * the file is refused rather than stored in part.
 */
function boundedOverRevs(events: OverRevEvent[]): OverRevEvent[] {
  if (JSON.stringify(events).length <= MAX_OVER_REV_BYTES) return events
  const withoutProfiles = events.map(({ profile: _profile, ...ev }) => ev)
  if (JSON.stringify(withoutProfiles).length <= MAX_OVER_REV_BYTES) return withoutProfiles
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
    },
    details: {
      rows: r.rows,
      skippedRows: r.skippedRows,
      warnings: r.warnings,
      delimiter: r.delimiter,
      header: r.header,
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
}

/** Stores a streamed logger file as a session, then announces that life changed (the life check runs in the background). */
export async function importLoggerFile(db: Knex, actor: Actor, meta: ImportMeta, upload: LoggerUpload) {
  const { declaredBytes, maxBytes } = upload
  if (declaredBytes > maxBytes) {
    throw createError({ statusCode: 413, statusMessage: 'Payload Too Large', message: `The file is ${(declaredBytes / 1048576).toFixed(0)} MiB; the limit is ${(maxBytes / 1048576).toFixed(0)} MiB` })
  }
  const result = await storeLoggerFile(db, actor, meta, upload.body, maxBytes)
  announceLifeChanged()
  return result
}

async function storeLoggerFile(db: Knex, actor: Actor, meta: ImportMeta, body: Readable, maxBytes: number) {
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

  let analysed: Awaited<ReturnType<typeof analyzeAndCompress>>
  try {
    analysed = await analyzeAndCompress(body, meta.mapping, cfg, maxBytes)
  } catch (error) {
    importErrorToHttp(error)
  }
  const { result, compressed } = analysed
  const f = sessionFields(result)
  const fileKey = newFileKey('logger', 'csv.gz')
  let stored = false
  const answer = async (q: Knex, id: number) => ({ session: toSessionDto(await sessionById(q, id)), rows: result.rows, skippedRows: result.skippedRows, warnings: result.warnings, gaps: result.summary.gaps.length })
  try {
    return await db.transaction(async (trx) => {
      // A duplicate is looked for only among the sessions this user may see, and named only then.
      // Another team may hold the same file (a shared test): that is neither refused nor hinted at.
      const existing = await scopeQuery(trx('sessions as s').join('engines as e', 'e.id', 's.engine_id').where('s.file_sha256', result.sha256), actor, { supplier: 'e.supplier_id', team: 's.team_id' })
        .orderBy('s.id')
        .first('s.id', 's.started_at', 's.kind', 'e.serial')
      if (existing) {
        conflict(`This file was already imported as session ${existing.id} (${existing.kind}, ${existing.serial}, ${new Date(existing.started_at).toISOString().slice(0, 16).replace('T', ' ')} UTC)`, { sessionId: existing.id })
      }
      const input = { engineId: meta.engineId, eventId: meta.eventId, kind: meta.kind, startedAt: meta.startedAt, runningSeconds: f.runningSeconds, distanceKm: f.distanceKm, histogram: f.histogram, overRevs: f.overRevs }
      const { engine: locked, type: t } = await checkSession(trx, actor, input, { exactBands: false })
      // Marked before the write: a store that kept the object but lost the answer is cleaned up too.
      stored = true
      await putFile(fileKey, compressed)
      const id = await insertSession(trx, actor, input, locked, t, {
        ...f.extras,
        source: 'logger',
        fileKey,
        fileName: meta.fileName.slice(0, 255),
        fileSha256: result.sha256,
        details: { ...f.details, mapping: meta.mapping, laps: meta.laps, bytes: result.bytes },
      })
      return answer(trx, id)
    })
  } catch (error) {
    if (stored && isUnavailableAnswer(error)) {
      // The database went away around the commit: the session either landed whole or not at all.
      const landed = await committedAfterLoss(db, async (q) => Boolean(await q('sessions').where('file_key', fileKey).first('id')))
      if (landed) {
        const row = await db('sessions').where('file_key', fileKey).first('id')
        return answer(db, row.id)
      }
      // Not known yet: the file stays, since a session may turn out to name it.
      if (landed === null) throw error
    }
    if (stored) await removeFile(fileKey).catch(() => {})
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
  const raw = await getFile(row.file_key)
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
    unpacked.end(raw)
    result = await analyzeLoggerStream(unpacked, details.mapping, cfg, { maxBytes })
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
