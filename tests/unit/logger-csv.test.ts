// Logger CSV import: known-answer files, the same files read by an independent parser
// (csv-parse) into the trace analyzer, every refused input, and the mapping helpers.

import { createHash } from 'node:crypto'
import { Readable } from 'node:stream'
import { parse as csvParse } from 'csv-parse'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { BENCH_TRACE_CONFIG, makeTraceCsv, traceCsvMapping, TRACE_CSV_HEADER } from '../../bench/make-trace'
import { LoggerImportError, MAX_LISTED_WARNINGS, analyzeLoggerStream } from '../../server/services/logger-csv'
import {
  detectDecimal,
  detectDelimiter,
  detectTimeUnit,
  guessMapping,
  guessUnits,
  headerSignature,
  parseClock,
  parseDecimal,
  type LoggerMapping,
} from '../../shared/domain/logger-mapping'
import { createTraceAnalyzer, type TraceConfig, type TraceSummary } from '../../shared/domain/trace'

// The synthetic files' engine type: log / inspect / teardown bands as in common practice, invented rpm levels.
const CFG: TraceConfig = BENCH_TRACE_CONFIG

const SIMPLE: LoggerMapping = {
  columns: { time: 'time', rpm: 'rpm', speed: 'speed', oilPressure: 'oil_p' },
  units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
  decimal: '.',
}

function bytesStream(data: Buffer | string, chunkSize = 0): Readable {
  const buf = typeof data === 'string' ? Buffer.from(data, 'utf8') : data
  if (chunkSize <= 0) return Readable.from([buf])
  const parts: Buffer[] = []
  for (let i = 0; i < buf.length; i += chunkSize) parts.push(buf.subarray(i, i + chunkSize))
  return Readable.from(parts)
}

/** time,rpm,speed,oil_p at 100 Hz: `rows` rows of 6000 rpm, 144 km/h, 4 bar, with overrides per row index. */
function simpleCsv(rows: number, cell: (k: number) => Partial<Record<'time' | 'rpm' | 'speed' | 'oil_p', string>> = () => ({}), sep = ',', nl = '\n'): string {
  let out = ['time', 'rpm', 'speed', 'oil_p'].join(sep) + nl
  for (let k = 0; k < rows; k++) {
    const c = { time: (k / 100).toFixed(2), rpm: '6000', speed: '144.0', oil_p: '4.00', ...cell(k) }
    out += [c.time, c.rpm, c.speed, c.oil_p].join(sep) + nl
  }
  return out
}

async function streamToBuffer(r: Readable): Promise<Buffer> {
  const parts: Buffer[] = []
  for await (const c of r) parts.push(c as Buffer)
  return Buffer.concat(parts)
}

async function importError(p: Promise<unknown>): Promise<LoggerImportError> {
  try {
    await p
  } catch (e) {
    expect(e).toBeInstanceOf(LoggerImportError)
    return e as LoggerImportError
  }
  throw new Error('expected the import to be refused')
}

/** Independent path: csv-parse (a different parser) + Number() into the analyzer. */
async function viaCsvParse(data: Buffer, mapping: LoggerMapping, delimiter: string): Promise<TraceSummary> {
  const parser = bytesStream(data).pipe(csvParse({ delimiter, bom: true }))
  const a = createTraceAnalyzer(CFG)
  let idx: Record<string, number> | null = null
  const num = (s: string | undefined) => (s === undefined ? Number.NaN : Number(mapping.decimal === ',' ? s.replace(',', '.') : s))
  for await (const row of parser as AsyncIterable<string[]>) {
    if (!idx) {
      idx = Object.fromEntries(row.map((h, i) => [h, i]))
      continue
    }
    const c = mapping.columns
    const at = (name?: string) => (name === undefined ? undefined : row[idx![name]!])
    a.pushValues(num(at(c.time)), num(at(c.rpm)), num(at(c.speed)), num(at(c.oilTemp)), num(at(c.oilPressure)), num(at(c.waterTemp)))
  }
  return a.finish()
}

describe('known answers', () => {
  it('reads a simple file: running time, histogram, distance, counts and SHA-256', async () => {
    const csv = simpleCsv(1001) // 0.00 .. 10.00 s
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)
    expect(r.rows).toBe(1001)
    expect(r.skippedRows).toBe(0)
    expect(r.warnings).toEqual([])
    expect(r.bytes).toBe(Buffer.byteLength(csv))
    expect(r.sha256).toBe(createHash('sha256').update(csv).digest('hex'))
    expect(r.delimiter).toBe(',')
    expect(r.header).toEqual(['time', 'rpm', 'speed', 'oil_p'])
    const s = r.summary
    expect(s.samples).toBe(1001)
    expect(s.durationS).toBe(10)
    expect(s.runningSeconds).toBe(10)
    expect(s.histogram[24]).toBe(10) // 6000 rpm in the 6000-6249 band
    expect(s.distanceSource).toBe('speed')
    expect(s.distanceKm).toBeCloseTo(0.4, 10) // 144 km/h = 40 m/s for 10 s
    expect(s.minOilPressureBar).toBe(4)
  })

  it('finds an over-rev and a low oil pressure event in the file', async () => {
    const csv = simpleCsv(1000, (k) => ({
      rpm: k >= 300 && k < 340 ? (k % 2 ? '8950' : '9050') : '6000', // chatter around 9000: one event
      oil_p: k >= 600 && k < 650 ? '1.80' : '4.00',
    }))
    const s = (await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)).summary
    expect(s.overRevs).toEqual([{ bandId: 'log', startS: 3, durationS: expect.closeTo(0.4, 9), peakRpm: 9050, secondsAbove: expect.any(Object), profile: expect.any(Array) }])
    // by hand: 20 of the 40 steps at 9,050 rpm, 0.01 s each, are at or above 9,000
    expect(s.overRevs[0]!.secondsAbove!.log).toBeCloseTo(0.2, 9)
    expect(s.lowOilPressure).toEqual([{ startS: 6, durationS: expect.closeTo(0.5, 9), minBar: 1.8 }])
  })

  it('reports a gap in the logger time and does not count it', async () => {
    const csv = simpleCsv(200, (k) => ({ time: (k < 100 ? k / 100 : 5 + k / 100).toFixed(2) }))
    const s = (await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)).summary
    expect(s.gaps).toEqual([{ atS: 0.99, seconds: expect.closeTo(5.01, 9) }])
    expect(s.runningSeconds).toBeCloseTo(1.98, 9)
  })

  it('gives the same result whatever the chunk size (multi-byte characters split across chunks)', async () => {
    const mapping: LoggerMapping = { ...SIMPLE, columns: { ...SIMPLE.columns, oilTemp: 'Öltemp °C' } }
    let csv = 'time,rpm,speed,oil_p,Öltemp °C\r\n'
    for (let k = 0; k < 300; k++) csv += `${(k / 100).toFixed(2)},${6000 + k},100.0,4.00,${(90 + k / 10).toFixed(1)}\r\n`
    const whole = await analyzeLoggerStream(bytesStream(csv), mapping, CFG)
    for (const size of [1, 3, 7, 64]) {
      const r = await analyzeLoggerStream(bytesStream(csv, size), mapping, CFG)
      expect(r).toEqual(whole)
    }
    expect(whole.summary.maxOilTempC).toBe(119.9)
    expect(whole.header[4]).toBe('Öltemp °C')
  })

  it('strips a UTF-8 BOM (the hash still covers the file as sent)', async () => {
    const csv = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(simpleCsv(10))])
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)
    expect(r.header[0]).toBe('time')
    expect(r.rows).toBe(10)
    expect(r.sha256).toBe(createHash('sha256').update(csv).digest('hex'))
  })

  it('reads a file without a final line break and skips blank lines', async () => {
    const csv = 'time,rpm\n\n0,3000\n0.5,3000\n\n1,4000'
    const r = await analyzeLoggerStream(bytesStream(csv), { ...SIMPLE, columns: { time: 'time', rpm: 'rpm' } }, { ...CFG, maxGapS: 1 })
    expect(r.rows).toBe(3)
    expect(r.summary.runningSeconds).toBe(1)
    expect(r.summary.maxRpm).toBe(4000)
  })

  it('reports progress in bytes', async () => {
    const seen: number[] = []
    const csv = simpleCsv(500)
    await analyzeLoggerStream(bytesStream(csv, 1000), SIMPLE, CFG, { onProgress: (b) => seen.push(b) })
    expect(seen.at(-1)).toBe(Buffer.byteLength(csv))
    expect(seen.length).toBe(Math.ceil(Buffer.byteLength(csv) / 1000))
  })
})

describe('papaparse path against csv-parse (independent parser)', () => {
  it('a 20 minute synthetic 100 Hz trace gives identical figures', async () => {
    const data = await streamToBuffer(makeTraceCsv({ hz: 100, seconds: 1200 }))
    const ours = await analyzeLoggerStream(bytesStream(data, 65536), traceCsvMapping(), CFG)
    const ref = await viaCsvParse(data, traceCsvMapping(), ',')
    expect(ours.summary).toEqual(ref)
    expect(ours.rows).toBe(120000)
    expect(ours.header).toEqual([...TRACE_CSV_HEADER])
    // the synthetic trace holds events of each kind, so the comparison covers them
    expect(ref.overRevs.length).toBeGreaterThan(0)
    expect(ref.lowOilPressure.length).toBeGreaterThan(0)
    expect(ref.runningSeconds).toBeGreaterThan(1000)
  }, 60_000) // 120,000 rows through two parsers: seconds on a busy machine

  it('a decimal-comma file with ";" gives the same figures as the decimal-point file', async () => {
    const point = await streamToBuffer(makeTraceCsv({ hz: 50, seconds: 600 }))
    const comma = await streamToBuffer(makeTraceCsv({ hz: 50, seconds: 600, delimiter: ';', decimal: ',' }))
    expect(comma.toString('utf8', 0, 200)).toMatch(/^time_s;engine_rpm;.*\n0,00;\d+;0,0;/s)
    const a = await analyzeLoggerStream(bytesStream(point), traceCsvMapping(), CFG)
    const mapping = { ...traceCsvMapping({ decimal: ',' }), delimiter: undefined } // delimiter detected
    const b = await analyzeLoggerStream(bytesStream(comma), mapping, CFG)
    expect(b.delimiter).toBe(';')
    expect(b.summary).toEqual(a.summary)
    expect(b.summary).toEqual(await viaCsvParse(comma, traceCsvMapping({ decimal: ',' }), ';'))
  })
})

describe('units and clock timestamps', () => {
  it('converts mph, °F and psi (NIST SP 811: 1 mile = 1.609344 km, F = C*9/5+32, 1 psi = 6894.757 Pa)', async () => {
    const csv = 'Time,RPM,Speed mph,Oil T F,Water T F,Oil P psi\n0,6000,100,230,194,60\n0.1,6000,100,212,176,30\n0.2,6000,100,212,176,30\n'
    const mapping: LoggerMapping = {
      columns: { time: 'Time', rpm: 'RPM', speed: 'Speed mph', oilTemp: 'Oil T F', waterTemp: 'Water T F', oilPressure: 'Oil P psi' },
      units: { time: 'seconds', speed: 'mph', temperature: 'F', pressure: 'psi' },
      decimal: '.',
    }
    const s = (await analyzeLoggerStream(bytesStream(csv), mapping, CFG)).summary
    expect(s.maxSpeedKmh).toBeCloseTo(160.9344, 9)
    expect(s.maxOilTempC).toBeCloseTo(110, 9)
    expect(s.maxWaterTempC).toBeCloseTo(90, 9)
    expect(s.minOilPressureBar).toBeCloseTo((30 * 6894.757) / 1e5, 6) // 2.068 bar
    expect(s.distanceKm).toBeCloseTo((160.9344 * 0.2) / 3600, 12)
  })

  it('reads kPa', async () => {
    const csv = 'time,rpm,p\n0,6000,350\n0.1,6000,250\n'
    const s = (await analyzeLoggerStream(bytesStream(csv), { ...SIMPLE, columns: { time: 'time', rpm: 'rpm', oilPressure: 'p' }, units: { ...SIMPLE.units, pressure: 'kPa' } }, CFG)).summary
    expect(s.minOilPressureBar).toBeCloseTo(2.5, 12) // 1 bar = 100 kPa
  })

  it('clock times count from the first row and pass midnight', async () => {
    const csv = 'clock,rpm\n23:59:59.50,5000\n23:59:59.75,5000\n00:00:00.00,5000\n00:00:00.25,5000\n'
    const mapping: LoggerMapping = { ...SIMPLE, columns: { time: 'clock', rpm: 'rpm' }, units: { ...SIMPLE.units, time: 'clock' } }
    const s = (await analyzeLoggerStream(bytesStream(csv), mapping, CFG)).summary
    expect(s.firstSampleT).toBe(0)
    expect(s.durationS).toBeCloseTo(0.75, 9)
    expect(s.runningSeconds).toBeCloseTo(0.75, 9)
  })

  it('ISO date-times with zones count from the first row', async () => {
    const csv = 'ts,rpm\n2031-05-17T10:00:00.000Z,5000\n2031-05-17T12:00:00.250+02:00,5000\n2031-05-17T10:00:00.500Z,5000\n'
    const mapping: LoggerMapping = { ...SIMPLE, columns: { time: 'ts', rpm: 'rpm' }, units: { ...SIMPLE.units, time: 'clock' } }
    const s = (await analyzeLoggerStream(bytesStream(csv), mapping, CFG)).summary
    expect(s.durationS).toBeCloseTo(0.5, 6)
    expect(s.runningSeconds).toBeCloseTo(0.5, 6)
  })

  it('a row whose clock time does not read is skipped with a warning', async () => {
    let csv = 'clock,rpm\n'
    for (let k = 0; k < 200; k++) csv += `10:00:${String(Math.floor(k / 10)).padStart(2, '0')}.${k % 10},5000\n`
    csv = csv.replace('10:00:05.0,', '10:61:05.0,')
    const mapping: LoggerMapping = { ...SIMPLE, columns: { time: 'clock', rpm: 'rpm' }, units: { ...SIMPLE.units, time: 'clock' } }
    const r = await analyzeLoggerStream(bytesStream(csv), mapping, CFG)
    expect(r.skippedRows).toBe(1)
    expect(r.warnings).toEqual([{ row: 52, column: 'clock', message: 'Row 52, column "clock": "10:61:05.0" is not a clock time (hh:mm:ss.sss or an ISO date-time)' }])
  })
})

describe('warnings: skipped rows', () => {
  it('skips a non-numeric cell, names row and column, and counts it', async () => {
    // row 57 of the file is data row index 55 (header = row 1)
    const csv = simpleCsv(1000, (k) => (k === 55 ? { rpm: '12a00' } : {}))
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)
    expect(r.skippedRows).toBe(1)
    expect(r.rows).toBe(1000)
    expect(r.summary.samples).toBe(999)
    expect(r.warnings).toEqual([{ row: 57, column: 'rpm', message: 'Row 57, column "rpm": "12a00" is not a number' }])
  })

  it('keeps a sample whose throttle or gear cell is unreadable: those channels feed no figure', async () => {
    const csv = 'time,rpm,speed,oil_p,tps,gear\n0.00,6000,144.0,4.00,55,3\n0.01,6000,144.0,4.00,##,x\n0.02,6000,144.0,4.00,56,3\n'
    const mapping: LoggerMapping = { ...SIMPLE, columns: { ...SIMPLE.columns, throttle: 'tps', gear: 'gear' } }
    const r = await analyzeLoggerStream(bytesStream(csv), mapping, CFG)
    expect([r.rows, r.skippedRows, r.summary.samples]).toEqual([3, 0, 3])
    // a mapped column must still be in the header
    const e = await importError(analyzeLoggerStream(bytesStream(csv.replace('tps', 'pedal')), mapping, CFG))
    expect([e.code, e.column]).toEqual(['missing_column', 'tps'])
  })

  it('skips a row with the wrong number of fields', async () => {
    const csv = simpleCsv(200).replace('\n0.10,6000,144.0,4.00\n', '\n0.10,6000,144.0\n')
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)
    expect(r.warnings).toEqual([{ row: 12, message: 'Row 12: 3 fields, the header has 4' }])
  })

  it('skips rpm out of range, a negative speed and an empty rpm', async () => {
    const csv = simpleCsv(1000, (k) => (k === 10 ? { rpm: '250000' } : k === 20 ? { speed: '-3' } : k === 30 ? { rpm: '' } : {}))
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG, { maxBadRowShare: 0.01 })
    expect(r.warnings.map((w) => w.message)).toEqual([
      'Row 12, column "rpm": 250000 is outside 0..100000 rpm',
      'Row 22, column "speed": -3 is below 0',
      'Row 32, column "rpm": the rpm is empty',
    ])
  })

  it('refuses a mapping whose time or rpm column is only blanks', async () => {
    // Found by the fuzz test: a tab as the rpm column name reached the row loop unmapped.
    const csv = simpleCsv(10)
    await expect(analyzeLoggerStream(bytesStream(csv), { ...SIMPLE, columns: { ...SIMPLE.columns, rpm: '\t' } }, CFG)).rejects.toMatchObject({ code: 'invalid_mapping', status: 400 })
  })

  it('skips a speed no vehicle reaches, so a distance never runs to infinity', async () => {
    // Found by the fuzz test: a finite but absurd speed cell (1e308) made the distance Infinity.
    const csv = simpleCsv(1000, (k) => (k === 40 ? { speed: '1e308' } : {}))
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG, { maxBadRowShare: 0.01 })
    expect(r.warnings.map((w) => w.message)).toEqual(['Row 42, column "speed": 1e+308 is above 1000, more than any vehicle runs'])
    expect(Number.isFinite(r.summary.distanceKm)).toBe(true)
  })

  it('an empty optional cell is no value, not a bad row', async () => {
    const csv = simpleCsv(100, (k) => (k % 10 === 0 ? { oil_p: '' } : k === 5 ? { oil_p: '1.5' } : {}))
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)
    expect(r.skippedRows).toBe(0)
    expect(r.summary.minOilPressureBar).toBe(1.5)
  })

  it('lists at most 50 warnings but counts every skipped row', async () => {
    const csv = simpleCsv(10000, (k) => (k % 150 === 7 ? { speed: 'n/a' } : {}))
    const r = await analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG)
    expect(r.skippedRows).toBe(67)
    expect(r.warnings).toHaveLength(MAX_LISTED_WARNINGS)
    expect(r.warnings[0]).toEqual({ row: 9, column: 'speed', message: 'Row 9, column "speed": "n/a" is not a number' })
  })
})

describe('fatal: refused files', () => {
  it('empty file', async () => {
    const e = await importError(analyzeLoggerStream(bytesStream(''), SIMPLE, CFG))
    expect([e.code, e.status]).toEqual(['empty_file', 400])
    expect((await importError(analyzeLoggerStream(bytesStream('\uFEFF\n\n  \n'), SIMPLE, CFG))).code).toBe('empty_file')
  })

  it('header only', async () => {
    for (const csv of ['time,rpm,speed,oil_p\n', 'time,rpm,speed,oil_p', 'time,rpm,speed,oil_p\n\n\n']) {
      const e = await importError(analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG))
      expect(e.code).toBe('no_data_rows')
      expect(e.message).toBe('The file has a header but no data rows')
    }
  })

  it('a mapped column missing from the header is named', async () => {
    const e = await importError(analyzeLoggerStream(bytesStream(simpleCsv(10)), { ...SIMPLE, columns: { ...SIMPLE.columns, oilTemp: 'Oil Temp' } }, CFG))
    expect([e.code, e.column, e.row, e.status]).toEqual(['missing_column', 'Oil Temp', 1, 400])
    expect(e.message).toBe('Column "Oil Temp" (mapped to oilTemp) is not in the header')
  })

  it('a mapped column twice in the header', async () => {
    const e = await importError(analyzeLoggerStream(bytesStream('time,rpm,rpm\n0,1,2\n'), { ...SIMPLE, columns: { time: 'time', rpm: 'rpm' } }, CFG))
    expect([e.code, e.column]).toEqual(['duplicate_column', 'rpm'])
  })

  it('header names match case-insensitively as a fallback', async () => {
    const r = await analyzeLoggerStream(bytesStream('TIME,RPM\n0,3000\n0.1,3000\n'), { ...SIMPLE, columns: { time: 'time', rpm: 'rpm' } }, CFG)
    expect(r.summary.runningSeconds).toBeCloseTo(0.1, 12)
  })

  it('binary garbage: NUL bytes or invalid UTF-8 at the start', async () => {
    const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0x00, 0x00, 0x00, 0x0d, 0x49, 0x48, 0x44, 0x52])
    const e1 = await importError(analyzeLoggerStream(bytesStream(png), SIMPLE, CFG))
    expect([e1.code, e1.message]).toEqual(['not_text', 'The file is not a text CSV (it contains NUL bytes)'])
    const latin1 = Buffer.from('time,rpm,speed,oil_p,Öl\n0,1,2,3,4\n', 'latin1')
    const e2 = await importError(analyzeLoggerStream(bytesStream(latin1), SIMPLE, CFG))
    expect([e2.code, e2.message]).toEqual(['not_text', 'The file is not a text CSV (it is not valid UTF-8)'])
  })

  it('invalid UTF-8 further on names its row', async () => {
    const good = Buffer.from(simpleCsv(1000))
    const at = good.indexOf('\n', 20000) + 1 // the start of some row past the first 8 KiB
    const row = good.subarray(0, at).toString().split('\n').length
    const bad = Buffer.concat([good.subarray(0, at), Buffer.from([0xc3, 0x28]), good.subarray(at)])
    const e = await importError(analyzeLoggerStream(bytesStream(bad, 4096), SIMPLE, CFG))
    expect(e.code).toBe('invalid_utf8')
    expect(e.row).toBe(row)
    expect(e.message).toBe(`Row ${row} is not valid UTF-8 text`)
  })

  it('a line longer than maxLineLength names the row', async () => {
    const csv = simpleCsv(20, (k) => (k === 3 ? { speed: '1'.repeat(5000) } : {}))
    const e = await importError(analyzeLoggerStream(bytesStream(csv, 1024), SIMPLE, CFG))
    expect([e.code, e.row, e.message]).toEqual(['line_too_long', 5, 'Row 5 is longer than 4096 bytes'])
    const e2 = await importError(analyzeLoggerStream(bytesStream(simpleCsv(20)), SIMPLE, CFG, { maxLineLength: 10 }))
    expect([e2.code, e2.row]).toEqual(['line_too_long', 1])
  })

  it('the line length limit holds wherever lines and chunks fall (checked against splitting the file)', async () => {
    // The reader looks for line breaks a window at a time; the reference splits the whole file.
    const max = 16
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.integer({ min: 0, max: max + 3 }), { minLength: 1, maxLength: 40 }),
        fc.constantFrom('\n', '\r\n', '\r'),
        fc.integer({ min: 1, max: 64 }),
        async (lengths, nl, chunk) => {
          const lines = ['time,rpm', ...lengths.map((n) => '7'.repeat(n))]
          const text = lines.join(nl) + nl
          const tooLong = lines.findIndex((l) => l.length > max)
          let code = 'accepted'
          let row: number | undefined
          try {
            await analyzeLoggerStream(bytesStream(text, chunk), { ...SIMPLE, columns: { time: 'time', rpm: 'rpm' } }, CFG, { maxLineLength: max })
          } catch (e) {
            code = (e as LoggerImportError).code
            row = (e as LoggerImportError).row
          }
          if (tooLong >= 0) expect([code, row]).toEqual(['line_too_long', tooLong + 1])
          else expect(code).not.toBe('line_too_long')
        },
      ),
      { numRuns: 300 },
    )
  })

  it('a line of exactly the limit passes with LF, with CR LF, and with CR LF split across chunks', async () => {
    const header = 'time,rpm,speed,oil_p'
    const line = '0.00,6000,144.0,4.00' // as long as the header: the limit below
    expect(line.length).toBe(header.length)
    for (const nl of ['\n', '\r\n']) {
      const csv = `${header}${nl}${line}${nl}0.01,6000,144.0,4${nl}`
      for (const chunk of [0, 1, 2, 3, header.length + nl.length + line.length + 1]) {
        const r = await analyzeLoggerStream(bytesStream(csv, chunk), SIMPLE, CFG, { maxLineLength: header.length })
        expect(r.rows).toBe(2)
      }
    }
    for (const chunk of [0, 1, 7]) {
      const e = await importError(analyzeLoggerStream(bytesStream(`${header}\r\n${line}0\r\n`, chunk), SIMPLE, CFG, { maxLineLength: header.length }))
      expect([e.code, e.row]).toEqual(['line_too_long', 2])
    }
  })

  it('a file over maxBytes is refused with status 413', async () => {
    const e = await importError(analyzeLoggerStream(bytesStream(simpleCsv(1000), 256), SIMPLE, CFG, { maxBytes: 5000 }))
    expect([e.code, e.status]).toEqual(['file_too_large', 413])
    const csv = simpleCsv(100)
    await expect(analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG, { maxBytes: Buffer.byteLength(csv) })).resolves.toBeTruthy()
  })

  it('time going backwards names the row and column', async () => {
    const csv = simpleCsv(100, (k) => (k === 55 ? { time: '0.30' } : {}))
    const e = await importError(analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG))
    expect([e.code, e.row, e.column, e.status]).toEqual(['time_backwards', 57, 'time', 400])
    expect(e.message).toBe('Row 57, column "time": "0.30" is earlier than row 56')
  })

  it('a duplicate timestamp names the row and column', async () => {
    const csv = simpleCsv(100, (k) => (k === 55 ? { time: '0.54' } : {}))
    const e = await importError(analyzeLoggerStream(bytesStream(csv), SIMPLE, CFG))
    expect([e.code, e.row, e.column]).toEqual(['time_duplicate', 57, 'time'])
    expect(e.message).toBe('Row 57, column "time": "0.54" repeats the timestamp of row 56')
  })

  it('more bad rows than maxBadRowShare of the rows', async () => {
    // 1000 rows, 1 % allowed = 10: 11 bad rows are refused, 10 are accepted
    const bad = (n: number) => simpleCsv(1000, (k) => (k % 50 === 1 && k < 50 * n ? { oil_p: 'x' } : {}))
    await expect(analyzeLoggerStream(bytesStream(bad(10)), SIMPLE, CFG)).resolves.toMatchObject({ skippedRows: 10 })
    const e = await importError(analyzeLoggerStream(bytesStream(bad(11)), SIMPLE, CFG))
    expect(e.code).toBe('too_many_bad_rows')
    expect([e.row, e.column]).toEqual([3, 'oil_p'])
    expect(e.message).toBe('Too many unreadable rows: 11 of 1000 (at most 10 may be skipped). First: Row 3, column "oil_p": "x" is not a number')
  })

  it('more bad rows than maxBadRows stops early', async () => {
    const csv = simpleCsv(100000, (k) => (k % 100 === 0 ? { rpm: '-' } : {}))
    const e = await importError(analyzeLoggerStream(bytesStream(csv, 65536), SIMPLE, CFG, { maxBadRows: 5, maxBadRowShare: 0.5 }))
    expect(e.code).toBe('too_many_bad_rows')
    expect(e.message).toMatch(/^Too many unreadable rows: 6 of \d+ \(at most 5 may be skipped\)/)
  })

  it('hints at a decimal comma when the mapping says "."', async () => {
    const csv = simpleCsv(100, () => ({ speed: '144,0' }), ';')
    const e = await importError(analyzeLoggerStream(bytesStream(csv), { ...SIMPLE, delimiter: ';' }, CFG))
    expect(e.code).toBe('too_many_bad_rows')
    expect(e.message).toContain('(the file may use a decimal comma)')
  })

  it('an invalid mapping', async () => {
    const e = await importError(analyzeLoggerStream(bytesStream(simpleCsv(5)), { ...SIMPLE, columns: { ...SIMPLE.columns, rpm: '' } }, CFG))
    expect(e.code).toBe('invalid_mapping')
  })

  it('passes a stream error on unchanged', async () => {
    const failing = new Readable({
      read() {
        this.destroy(new Error('connection reset'))
      },
    })
    await expect(analyzeLoggerStream(failing, SIMPLE, CFG)).rejects.toThrow('connection reset')
  })
})

describe('mapping helpers', () => {
  it('detectDelimiter picks the most frequent candidate outside quotes', () => {
    expect(detectDelimiter('time,rpm,speed')).toBe(',')
    expect(detectDelimiter('time;rpm;"a,b,c"')).toBe(';')
    expect(detectDelimiter('time\trpm\tspeed')).toBe('\t')
    expect(detectDelimiter('time|rpm|speed')).toBe('|')
    expect(detectDelimiter('time')).toBe(',')
  })

  it('detectDecimal', () => {
    expect(detectDecimal([['0,01', '6000', '144,5'], ['0,02', '6001', '144,6']], ';')).toBe(',')
    expect(detectDecimal([['0.01', '6000', '144.5']], ';')).toBe('.')
    expect(detectDecimal([['0', '6000']], ';')).toBe('.')
    expect(detectDecimal([['1', '2']], ',')).toBe('.')
  })

  it('guessMapping by common header names', () => {
    expect(guessMapping(['Time [s]', 'Engine Speed (rpm)', 'Vehicle Speed [km/h]', 'Oil Temp', 'Oil Pressure', 'Coolant Temp', 'TPS', 'Gear', 'Lat G'])).toEqual({
      time: 'Time [s]',
      rpm: 'Engine Speed (rpm)',
      speed: 'Vehicle Speed [km/h]',
      oilTemp: 'Oil Temp',
      oilPressure: 'Oil Pressure',
      waterTemp: 'Coolant Temp',
      throttle: 'TPS',
      gear: 'Gear',
    })
    expect(guessMapping(['\uFEFFt', 'RPM', 'speed'])).toEqual({ time: 't', rpm: 'RPM', speed: 'speed' })
    expect(guessMapping(['Engine Oil Temperature Sensor 1', 'rpm_engine', 'Elapsed_Time'])).toEqual({ oilTemp: 'Engine Oil Temperature Sensor 1', rpm: 'rpm_engine', time: 'Elapsed_Time' })
    expect(guessMapping([...TRACE_CSV_HEADER])).toMatchObject({ time: 'time_s', rpm: 'engine_rpm', speed: 'speed_kmh', oilTemp: 'oil_temp_c', oilPressure: 'oil_press_bar', waterTemp: 'water_temp_c', throttle: 'throttle_pct', gear: 'gear' })
  })

  it('guessUnits from unit text in the header', () => {
    expect(guessUnits(['Speed [mph]', 'Oil T (F)', 'Oil P psi'])).toEqual({ speed: 'mph', temperature: 'F', pressure: 'psi' })
    expect(guessUnits(['speed km/h', 'water °C', 'oil kPa'])).toEqual({ speed: 'kmh', temperature: 'C', pressure: 'kPa' })
  })

  it('headerSignature ignores case, BOM and blanks, not order', () => {
    expect(headerSignature(['\uFEFFTime ', ' Engine  RPM'])).toBe('time|engine rpm')
    expect(headerSignature(['time', 'engine rpm'])).toBe(headerSignature(['TIME', 'Engine RPM']))
    expect(headerSignature(['rpm', 'time'])).not.toBe(headerSignature(['time', 'rpm']))
  })

  it('parseClock: time of day and ISO date-times against Date.UTC / Date.parse', () => {
    expect(parseClock('00:00:00')).toBe(0)
    expect(parseClock('12:34:56.789')).toBeCloseTo(45296.789, 9)
    expect(parseClock('9:05:01,5')).toBeCloseTo(32701.5, 9)
    for (const s of ['2031-05-17T10:00:00Z', '2031-05-17T10:00:00.250+02:00', '2030-12-31T23:59:59.999-05:30', '2032-02-29T00:00:01.5Z']) {
      expect(parseClock(s)).toBeCloseTo(Date.parse(s) / 1000, 6)
    }
    expect(parseClock('2031-05-17 10:00:00')).toBe(Date.UTC(2031, 4, 17, 10) / 1000)
    for (const s of ['', '12:60:00', '24:00:00', '1:2:3', '2031-02-29T00:00:00Z', '2031-13-01T00:00:00Z', 'noon', '12:00:00.']) {
      expect(parseClock(s)).toBeNull()
    }
  })

  it('detectTimeUnit', () => {
    expect(detectTimeUnit(['0.00', '0.01'])).toBe('seconds')
    expect(detectTimeUnit(['10:00:00.00', '10:00:00.01'])).toBe('clock')
  })

  it('parseDecimal is strict and agrees with Number() on decimal strings', () => {
    expect(parseDecimal('12a00', 46)).toBeNaN()
    for (const s of ['', ' ', '-', '.', '1.2.3', '0x1A', 'Infinity', '1e', '1e400', '--1', '1,5']) expect(parseDecimal(s, 46)).toBeNaN()
    expect(parseDecimal('1,5', 44)).toBe(1.5)
    expect(parseDecimal(' 42 \r', 46)).toBe(42)
    expect(parseDecimal('+1.5e3', 46)).toBe(1500)
    expect(parseDecimal('-0.125', 46)).toBe(-0.125)
    expect(parseDecimal('.5', 46)).toBe(0.5)
    expect(parseDecimal('5.', 46)).toBe(5)
    expect(parseDecimal('12345678901234567890', 46)).toBe(12345678901234567890)
    const decimalText = fc
      .tuple(fc.boolean(), fc.stringMatching(/^\d{1,20}$/), fc.option(fc.stringMatching(/^\d{0,20}$/)), fc.option(fc.integer({ min: -30, max: 30 })))
      .map(([neg, int, frac, exp]) => `${neg ? '-' : ''}${int}${frac === null ? '' : `.${frac}`}${exp === null ? '' : `e${exp}`}`)
    fc.assert(
      fc.property(decimalText, (s) => {
        expect(parseDecimal(s, 46)).toBe(Number(s))
        expect(parseDecimal(s.replace('.', ','), 44)).toBe(Number(s))
      }),
      { numRuns: 2000 },
    )
  })
})
