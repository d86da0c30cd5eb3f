// Property-based tests of the logger CSV reader against bad input: arbitrary bytes, random
// mutations of a valid trace, extreme numbers, unicode, very long fields, arbitrary mappings,
// arbitrary chunking. Whatever comes in, analyzeLoggerStream either returns a result whose
// figures are finite and whose hash is the hash of the bytes sent, or throws a
// LoggerImportError with a message and status 400 or 413. Anything else (a TypeError, a
// RangeError, a hang) would reach the client as a 500.
import { createHash } from 'node:crypto'
import { Readable } from 'node:stream'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { makeTraceCsv, traceCsvMapping, TRACE_CSV_HEADER } from '../../bench/make-trace'
import { LoggerImportError, analyzeLoggerStream, type LoggerImportOptions } from '../../server/services/logger-csv'
import type { LoggerMapping } from '../../shared/domain/logger-mapping'
import { TRACE_MAX_RPM, type TraceConfig } from '../../shared/domain/trace'
import { makeOverRevBands, makeTraceConfig } from '../../db/fixtures'

const CFG: TraceConfig = makeTraceConfig({
  idleRpm: 2500,
  bandWidthRpm: 250,
  maxGapS: 0.5,
  // invented demo levels
  overRevBands: makeOverRevBands([['log', 9000, 0.1], ['teardown', 9600, 0]]),
  lowOilPressure: { belowBar: 2.5, aboveRpm: 4000, minDurationS: 0.2 },
  trackLengthKm: 4.4,
  laps: 3,
})
const MAPPING = traceCsvMapping()
const RUNS = Number(process.env.FUZZ_RUNS ?? 150)

async function streamToBuffer(s: Readable): Promise<Buffer> {
  const parts: Buffer[] = []
  for await (const c of s) parts.push(c as Buffer)
  return Buffer.concat(parts)
}
// 20 s at 50 Hz: 1,001 lines, about 60 KB: big enough to cross the 8 KiB text sniff
const VALID = await streamToBuffer(makeTraceCsv({ hz: 50, seconds: 20, seed: 11 }))

/** Splits bytes at the given cut points (sorted, deduplicated): chunk boundaries fall anywhere, mid-character too. */
function chunked(buf: Buffer, cuts: number[]): Buffer[] {
  const points = [...new Set(cuts.map((c) => c % (buf.length + 1)))].sort((a, b) => a - b)
  const out: Buffer[] = []
  let from = 0
  for (const p of points) {
    if (p > from) out.push(buf.subarray(from, p))
    from = Math.max(from, p)
  }
  if (from < buf.length) out.push(buf.subarray(from))
  return out
}

/** The contract: a sane result, or a LoggerImportError fit for a 400/413 answer. Never anything else. */
async function checkContract(bytes: Buffer, mapping: unknown = MAPPING, cuts: number[] = [], opts: LoggerImportOptions = {}) {
  let result
  try {
    result = await analyzeLoggerStream(Readable.from(chunked(bytes, cuts)), mapping as LoggerMapping, CFG, opts)
  } catch (error) {
    if (!(error instanceof LoggerImportError)) throw new Error(`threw ${(error as Error)?.name}: ${(error as Error)?.message}`, { cause: error })
    expect(error.message.length).toBeGreaterThan(5)
    expect([400, 413]).toContain(error.status)
    expect(error.code).toMatch(/^[a-z0-9_]+$/)
    if (error.row !== undefined) expect(Number.isInteger(error.row) && error.row >= 1).toBe(true)
    return 'refused' as const
  }
  expect(result.sha256).toBe(createHash('sha256').update(bytes).digest('hex'))
  expect(result.bytes).toBe(bytes.length)
  expect(result.rows).toBeGreaterThan(0)
  expect(result.skippedRows).toBeGreaterThanOrEqual(0)
  expect(result.skippedRows).toBeLessThanOrEqual(result.rows)
  expect(result.warnings.length).toBeLessThanOrEqual(Math.min(50, result.skippedRows))
  const s = result.summary
  for (const [k, v] of Object.entries({ durationS: s.durationS, runningSeconds: s.runningSeconds, distanceKm: s.distanceKm, gapSeconds: s.gapSeconds, maxRpm: s.maxRpm })) {
    expect(Number.isFinite(v), `${k} = ${v}`).toBe(true)
    expect(v, k).toBeGreaterThanOrEqual(0)
  }
  expect(s.maxRpm).toBeLessThanOrEqual(TRACE_MAX_RPM)
  for (const h of s.histogram) expect(Number.isFinite(h) && h >= 0).toBe(true)
  expect(s.runningSeconds).toBeLessThanOrEqual(s.durationS + 1e-6)
  return 'read' as const
}

const cutsArb = fc.array(fc.nat({ max: 70_000 }), { maxLength: 12 })

describe('logger CSV reader under fuzzed input', () => {
  it('reads the unmutated trace (the base the mutations start from)', async () => {
    expect(await checkContract(VALID)).toBe('read')
  })

  it('arbitrary bytes are refused or read, never thrown as anything else', async () => {
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ maxLength: 12_000 }), cutsArb, async (bytes, cuts) => {
        await checkContract(Buffer.from(bytes), MAPPING, cuts)
      }),
      { numRuns: RUNS },
    )
  })

  it('arbitrary text with the right header line first', async () => {
    const text = fc.string({ unit: fc.constantFrom('0', '1', '9', '.', ',', '-', 'e', '\n', '\r', '"', ' ', ';', '\t', 'x', '\u00e9', '\ufeff'), maxLength: 3000 })
    await fc.assert(
      fc.asyncProperty(text, cutsArb, async (body, cuts) => {
        await checkContract(Buffer.from(`${TRACE_CSV_HEADER.join(',')}\n${body}`), MAPPING, cuts)
      }),
      { numRuns: RUNS },
    )
  })

  type Mutation =
    | { op: 'flip'; at: number; byte: number }
    | { op: 'insert'; at: number; text: string }
    | { op: 'delete'; at: number; len: number }
    | { op: 'duplicate'; at: number; len: number }
    | { op: 'truncate'; at: number }
  const mutation: fc.Arbitrary<Mutation> = fc.oneof(
    fc.record({ op: fc.constant('flip' as const), at: fc.nat(), byte: fc.integer({ min: 0, max: 255 }) }),
    fc.record({ op: fc.constant('insert' as const), at: fc.nat(), text: fc.oneof(fc.string({ unit: 'binary', maxLength: 40 }), fc.constantFrom('\n', '\r', '"', ',', '\u0000', '\n1e308,1e308,1e308\n', '\nNaN,Infinity,-0\n', '\n\n\n')) }),
    fc.record({ op: fc.constant('delete' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 4000 }) }),
    fc.record({ op: fc.constant('duplicate' as const), at: fc.nat(), len: fc.integer({ min: 1, max: 4000 }) }),
    fc.record({ op: fc.constant('truncate' as const), at: fc.nat() }),
  )
  function mutate(base: Buffer, ms: Mutation[]): Buffer {
    let b = base
    for (const m of ms) {
      const at = m.at % (b.length + 1)
      if (m.op === 'flip' && b.length > 0) {
        b = Buffer.from(b)
        b[at % b.length] = m.byte
      } else if (m.op === 'insert') b = Buffer.concat([b.subarray(0, at), Buffer.from(m.text, 'utf8'), b.subarray(at)])
      else if (m.op === 'delete') b = Buffer.concat([b.subarray(0, at), b.subarray(at + m.len)])
      else if (m.op === 'duplicate') b = Buffer.concat([b.subarray(0, at + m.len), b.subarray(at, at + m.len), b.subarray(at + m.len)])
      else if (m.op === 'truncate') b = b.subarray(0, at)
    }
    return b
  }

  it('random mutations of a valid file: flipped, inserted, deleted, duplicated and cut bytes', async () => {
    const seen = { read: 0, refused: 0 }
    await fc.assert(
      fc.asyncProperty(fc.array(mutation, { minLength: 1, maxLength: 8 }), cutsArb, async (ms, cuts) => {
        seen[await checkContract(mutate(VALID, ms), MAPPING, cuts)]++
      }),
      { numRuns: RUNS },
    )
    // both outcomes occur: the mutations are neither all harmless nor all fatal
    expect(seen.read).toBeGreaterThan(0)
    expect(seen.refused).toBeGreaterThan(0)
  })

  const extreme = fc.oneof(
    fc.double().map(String),
    fc.double({ noNaN: true }).map((x) => x.toExponential()),
    fc.constantFrom('1e308', '-1e308', '1e309', '-1e999', '5e-324', '-0', 'NaN', 'Infinity', '-Infinity', '0x1F', '1_000', '٣', '１２', '9'.repeat(400), '0.' + '0'.repeat(300) + '1', '1,5', '', ' ', '+7', '.5', '5.', '1e', 'e5', '--1'),
    fc.integer().map(String),
    fc.bigInt({ min: -(10n ** 30n), max: 10n ** 30n }).map(String),
  )

  it('extreme numbers in every cell: huge, tiny, non-finite, exotic digits', async () => {
    const header = 'time_s,engine_rpm,speed_kmh,oil_press_bar,oil_temp_c'
    const mapping: LoggerMapping = { columns: { time: 'time_s', rpm: 'engine_rpm', speed: 'speed_kmh', oilPressure: 'oil_press_bar', oilTemp: 'oil_temp_c' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
    const row = fc.tuple(extreme, extreme, extreme, extreme, extreme)
    await fc.assert(
      fc.asyncProperty(fc.array(row, { minLength: 1, maxLength: 60 }), fc.boolean(), async (rows, increasingTime) => {
        // with increasing times most rows pass the time checks and the other columns are exercised
        const lines = rows.map((r, i) => (increasingTime ? [String(i / 10), ...r.slice(1)] : r).map((c) => (c.includes(',') ? `"${c}"` : c)).join(','))
        await checkContract(Buffer.from(`${header}\n${lines.join('\n')}\n`), mapping, [], { maxLineLength: 100_000, maxBadRowShare: 1, maxBadRows: 1000 })
      }),
      { numRuns: RUNS },
    )
  })

  it('unicode in the header, in the cells and in the mapping', async () => {
    const uni = fc.string({ unit: 'binary', maxLength: 30 })
    await fc.assert(
      fc.asyncProperty(fc.array(uni, { minLength: 1, maxLength: 6 }), fc.array(fc.array(uni, { maxLength: 6 }), { maxLength: 30 }), fc.nat(), async (header, rows, pick) => {
        const mapping: LoggerMapping = { columns: { time: header[pick % header.length] || 't', rpm: header[(pick + 1) % header.length] || 'r' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
        const text = [header, ...rows].map((r) => r.join(',')).join('\n')
        await checkContract(Buffer.from(text, 'utf8'), mapping, [pick])
      }),
      { numRuns: RUNS },
    )
  })

  it('very long fields and lines: refused as too long, never buffered without bound', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 1, max: 200_000 }), fc.constantFrom('header', 'cell', 'quoted'), cutsArb, async (len, where, cuts) => {
        const long = 'x'.repeat(len)
        const head = where === 'header' ? `time_s,engine_rpm,${long}` : 'time_s,engine_rpm'
        const cell = where === 'quoted' ? `"${long}\n${long}"` : long
        const body = `${head}\n0.0,3000\n0.1,${where === 'header' ? '3000' : cell}\n0.2,3000\n`
        const mapping: LoggerMapping = { columns: { time: 'time_s', rpm: 'engine_rpm' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
        const outcome = await checkContract(Buffer.from(body), mapping, cuts)
        if (len > 4096) expect(outcome).toBe('refused')
      }),
      { numRuns: 60 },
    )
  })

  it('a size limit holds for any chunking: 413 past maxBytes', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 1, max: VALID.length - 1 }), cutsArb, async (maxBytes, cuts) => {
        expect(await checkContract(VALID, MAPPING, cuts, { maxBytes })).toBe('refused')
        // the file is valid, so the only reason to refuse it is its size
        const error = await analyzeLoggerStream(Readable.from(chunked(VALID, cuts)), MAPPING, CFG, { maxBytes }).catch((e) => e)
        expect(error).toMatchObject({ code: 'file_too_large', status: 413 })
      }),
      { numRuns: 40 },
    )
  })

  it('arbitrary mappings are refused as invalid_mapping or used, never crash', async () => {
    await fc.assert(
      fc.asyncProperty(fc.oneof(fc.anything(), fc.record({ columns: fc.anything(), units: fc.anything(), delimiter: fc.anything(), decimal: fc.anything() }, { requiredKeys: [] })), async (mapping) => {
        await checkContract(VALID.subarray(0, 3000), mapping)
      }),
      { numRuns: RUNS },
    )
  })
})
