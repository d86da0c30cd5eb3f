// Export layouts and the byte reader: files with metadata lines before the channel names, a
// units row, tab or semicolon delimiters, decimal commas, a BOM, CR LF, quoted names, time in
// milliseconds, blank cells of slower channels. The byte reader is held to papaparse (the
// reference row reader) on generated files of all these layouts: the same session, field by
// field; csv-parse, an independent general-purpose parser, agrees on the number of data rows.

import { Readable } from 'node:stream'
import { parse as csvParseSync } from 'csv-parse/sync'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { BENCH_TRACE_CONFIG } from '../../bench/make-trace'
import { LoggerImportError, analyzeLoggerStream, type LoggerImportResult } from '../../server/services/logger-csv'
import type { LoggerMapping } from '../../shared/domain/logger-mapping'

const CFG = BENCH_TRACE_CONFIG

function chunks(data: Buffer, cuts: number[] = []): Readable {
  const points = [...new Set(cuts.map((c) => c % (data.length + 1)))].sort((a, b) => a - b)
  const out: Buffer[] = []
  let from = 0
  for (const p of points) {
    if (p > from) out.push(data.subarray(from, p))
    from = Math.max(from, p)
  }
  if (from < data.length) out.push(data.subarray(from))
  return Readable.from(out)
}

async function read(data: Buffer | string, mapping: LoggerMapping, rowReader: 'scan' | 'papaparse' = 'scan', cuts: number[] = []): Promise<LoggerImportResult> {
  return analyzeLoggerStream(chunks(Buffer.isBuffer(data) ? data : Buffer.from(data, 'utf8'), cuts), mapping, CFG, { rowReader })
}

async function refusal(p: Promise<unknown>): Promise<LoggerImportError> {
  const e = await p.then(() => null, (err) => err)
  expect(e).toBeInstanceOf(LoggerImportError)
  return e as LoggerImportError
}

interface Layout {
  delimiter: ',' | ';' | '\t' | '|'
  decimal: '.' | ','
  newline: '\n' | '\r\n'
  bom: boolean
  quoted: boolean
  preamble: string[]
  unitsRow: boolean
  ms: boolean
  /** every n-th row carries the slow channels; the others leave them blank (0: all rows) */
  slowEvery: number
  extraColumns: number
}

const NAMES = ['Time', 'Engine RPM', 'Speed', 'Oil Temp', 'Oil Press', 'Water Temp']

/** A 100 Hz trace in the given layout: rpm ramps and dips (over-revs, idle), speed follows, slow channels every n-th row. */
function layoutFile(l: Layout, rows: number, seed: number): { text: string; mapping: LoggerMapping } {
  const q = (s: string) => (l.quoted ? `"${s}"` : s)
  const num = (v: number, digits: number) => (l.decimal === ',' ? v.toFixed(digits).replace('.', ',') : v.toFixed(digits))
  const extra = Array.from({ length: l.extraColumns }, (_, i) => `aux ${i + 1}`)
  const lines: string[] = [...l.preamble]
  lines.push([...NAMES, ...extra].map(q).join(l.delimiter))
  if (l.unitsRow) lines.push([l.ms ? 'ms' : 's', 'rpm', 'km/h', '°C', 'bar', '°C', ...extra.map(() => '')].join(l.delimiter))
  let rnd = seed >>> 0
  const next = () => ((rnd = (rnd * 1664525 + 1013904223) >>> 0) / 2 ** 32)
  for (let k = 0; k < rows; k++) {
    const rpm = Math.round(k % 700 < 40 ? 1200 + 200 * next() : 5000 + 4700 * Math.abs(Math.sin(k / 90)) + 30 * next())
    const slow = l.slowEvery === 0 || k % l.slowEvery === 0
    const cells = [
      l.ms ? String(k * 10) : num(k / 100, 2),
      String(rpm),
      num(rpm / 40, 1),
      slow ? num(95 + 10 * next(), 1) : '',
      slow ? num(rpm > 3000 ? 4 + next() : 1.5, 2) : '',
      slow ? num(88 + next(), 1) : '',
      ...extra.map((_, i) => num(i + (k % 97) / 97, 3)), // no draw from next(): the trace stays that of the plain file
    ]
    lines.push(cells.join(l.delimiter))
  }
  const text = (l.bom ? '\uFEFF' : '') + lines.join(l.newline) + l.newline
  const mapping: LoggerMapping = {
    columns: { time: 'Time', rpm: 'Engine RPM', speed: 'Speed', oilTemp: 'Oil Temp', oilPressure: 'Oil Press', waterTemp: 'Water Temp' },
    units: { time: l.ms ? 'ms' : 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
    delimiter: l.delimiter,
    decimal: l.decimal,
    ...(l.preamble.length > 0 || l.unitsRow ? { layout: { headerLine: l.preamble.length + 1, unitsRow: l.unitsRow, unitsFromRow: false } } : {}),
  }
  return { text, mapping }
}

const layoutArb: fc.Arbitrary<Layout> = fc.record({
  delimiter: fc.constantFrom(',' as const, ';' as const, '\t' as const, '|' as const),
  decimal: fc.constantFrom('.' as const, ',' as const),
  newline: fc.constantFrom('\n' as const, '\r\n' as const),
  bom: fc.boolean(),
  quoted: fc.boolean(),
  preamble: fc.array(fc.constantFrom('Format: generic export', 'Vehicle: car 7', 'Venue: Hollow Ridge', 'Date: 2031-05-17', 'Time: 14:02:10', 'Sample rate: 100 Hz', ''), { maxLength: 6 }),
  unitsRow: fc.boolean(),
  ms: fc.boolean(),
  slowEvery: fc.constantFrom(0, 1, 5, 10),
  extraColumns: fc.constantFrom(0, 3, 50),
}).map((l) => (l.delimiter === ',' ? { ...l, decimal: '.' as const } : l)) // a comma cannot be both

describe('byte reader against papaparse (property)', () => {
  it('reads every generated layout to the same session as papaparse, and csv-parse counts the same data rows', async () => {
    await fc.assert(
      fc.asyncProperty(layoutArb, fc.integer({ min: 1, max: 2500 }), fc.nat(), fc.array(fc.nat({ max: 400_000 }), { maxLength: 8 }), async (l, rows, seed, cuts) => {
        const { text, mapping } = layoutFile(l, rows, seed)
        const data = Buffer.from(text, 'utf8')
        const scan = await read(data, mapping, 'scan', cuts)
        const papa = await read(data, mapping, 'papaparse', cuts)
        expect(scan).toEqual(papa)
        expect(scan.rows).toBe(rows)
        // csv-parse from the first data row on; blank lines are not rows
        const firstData = (mapping.layout?.headerLine ?? 1) + (l.unitsRow ? 2 : 1)
        const records = csvParseSync(text, { delimiter: l.delimiter, bom: true, from_line: firstData, skip_empty_lines: true, relax_column_count: true }) as string[][]
        expect(records.length).toBe(scan.rows)
      }),
      { numRuns: 60 },
    )
  }, 120_000)

  it('agrees with papaparse on rows it does not read itself: quoted cells, blanks, junk, wrong widths', async () => {
    const cell = fc.oneof(fc.constantFrom('1', '-2.5', '', ' 3 ', '"4"', '"5,5"', 'x', '1e3', '+7', '.5', '12345678901234567', '"a""b"', '9'.repeat(16)), fc.integer({ min: 0, max: 9000 }).map(String))
    const row = fc.array(cell, { minLength: 1, maxLength: 5 })
    await fc.assert(
      fc.asyncProperty(fc.array(row, { minLength: 1, maxLength: 40 }), fc.boolean(), async (rows, increasing) => {
        const body = rows.map((r, i) => (increasing ? [String(i / 10), ...r.slice(1)] : r).join(',')).join('\n')
        const mapping: LoggerMapping = { columns: { time: 'time', rpm: 'rpm', speed: 'speed', oilPressure: 'oil_p' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
        const text = `time,rpm,speed,oil_p\n${body}\n`
        const opts = { maxBadRowShare: 1, maxBadRows: 1000 }
        const scan = await analyzeLoggerStream(chunks(Buffer.from(text)), mapping, CFG, { ...opts, rowReader: 'scan' }).catch((e) => e)
        const papa = await analyzeLoggerStream(chunks(Buffer.from(text)), mapping, CFG, { ...opts, rowReader: 'papaparse' }).catch((e) => e)
        expect(scan).toEqual(papa)
      }),
      { numRuns: 200 },
    )
  })
})

describe('export layouts give the same session as the plain file', () => {
  const plain: Layout = { delimiter: ',', decimal: '.', newline: '\n', bom: false, quoted: false, preamble: [], unitsRow: false, ms: false, slowEvery: 0, extraColumns: 0 }
  const base = layoutFile(plain, 3000, 7)

  it.each([
    ['a preamble of metadata lines', { preamble: ['Format: generic export', 'Vehicle: car 7', '', 'Date: 2031-05-17', 'Time: 14:02:10'] }],
    ['a units row', { unitsRow: true }],
    ['tab as delimiter with decimal commas', { delimiter: '\t', decimal: ',' }],
    ['a byte-order mark', { bom: true }],
    ['CR LF line breaks', { newline: '\r\n' }],
    ['quoted channel names', { quoted: true }],
    ['time in milliseconds', { ms: true, unitsRow: true }],
    ['all of them at once, and fifty more channels', { preamble: ['Logger export', 'Venue;Hollow Ridge'], unitsRow: true, delimiter: ';', decimal: ',', bom: true, newline: '\r\n', quoted: true, ms: true, extraColumns: 50 }],
  ] as const)('%s', async (_name, change) => {
    const { text, mapping } = layoutFile({ ...plain, ...change } as Layout, 3000, 7)
    const expected = await read(base.text, base.mapping)
    const got = await read(text, mapping)
    expect(got.summary).toEqual(expected.summary)
    expect(got.rows).toBe(3000)
    expect(got.header.slice(0, 6)).toEqual(NAMES)
    expect(got.preamble).toEqual(((change as Partial<Layout>).preamble ?? []).filter((p) => p !== ''))
  })

  it('mixed rates: blank cells of the slower channels are no value, not bad rows', async () => {
    const { text, mapping } = layoutFile({ ...plain, slowEvery: 10 }, 3000, 7)
    const r = await read(text, mapping)
    expect(r.skippedRows).toBe(0)
    expect(r.summary.runningSeconds).toBeGreaterThan(0)
    expect(r.summary.minOilPressureBar).not.toBeNull()
  })
})

describe('units read from the units row', () => {
  // NIST SP 811: 1 mile = 1.609344 km; F = C * 9/5 + 32; 1 psi = 6,894.757 Pa
  const file = (units: string) =>
    `Logger export\nDriver: test\nTime,RPM,Speed,Oil T,Water T,Oil P\n${units}\n0,6000,100,230,194,60\n100,6000,100,212,176,30\n200,6000,100,212,176,30\n`
  const mapping: LoggerMapping = {
    columns: { time: 'Time', rpm: 'RPM', speed: 'Speed', oilTemp: 'Oil T', waterTemp: 'Water T', oilPressure: 'Oil P' },
    units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
    decimal: '.',
    layout: { headerLine: 3, unitsRow: true, unitsFromRow: true },
  }

  it('takes mph, °F, psi and ms from the row', async () => {
    const r = await read(file('ms,rpm,mph,°F,[F],psi'), mapping)
    expect(r.units).toEqual({ time: 'ms', speed: 'mph', temperature: 'F', pressure: 'psi' })
    const s = r.summary
    expect(s.durationS).toBeCloseTo(0.2, 12)
    expect(s.maxSpeedKmh).toBeCloseTo(160.9344, 9)
    expect(s.maxOilTempC).toBeCloseTo(110, 9)
    expect(s.maxWaterTempC).toBeCloseTo(90, 9)
    expect(s.minOilPressureBar).toBeCloseTo((30 * 6894.757) / 1e5, 6)
    expect(r.preamble).toEqual(['Logger export', 'Driver: test'])
    // the same as naming those units in the mapping
    const byMapping = await read(file('x,x,x,x,x,x'), { ...mapping, units: { time: 'ms', speed: 'mph', temperature: 'F', pressure: 'psi' }, layout: { headerLine: 3, unitsRow: true, unitsFromRow: false } })
    expect(byMapping.summary).toEqual(s)
  })

  it('a blank unit cell keeps the mapping\'s unit', async () => {
    const r = await read(file(',,,,,'), { ...mapping, units: { time: 'ms', speed: 'kmh', temperature: 'C', pressure: 'bar' } })
    expect(r.units).toEqual({ time: 'ms', speed: 'kmh', temperature: 'C', pressure: 'bar' })
  })

  it('an unknown unit names the row, the column and what can be read', async () => {
    const e = await refusal(read(file('s,rpm,mph,F,F,atm'), mapping))
    expect(e).toMatchObject({ code: 'unknown_unit', status: 400, row: 4, column: 'Oil P' })
    expect(e.message).toBe('Row 4, column "Oil P": unit "atm" is not one that can be read (bar, kPa or psi)')
  })

  it('a preamble with no header after it is refused, naming the lines', async () => {
    const e = await refusal(read('Logger export\nVehicle: car 7\n', { ...mapping, layout: { headerLine: 5, unitsRow: false, unitsFromRow: false } }))
    expect(e).toMatchObject({ code: 'no_header', status: 400 })
    expect(e.message).toBe('The channel names should be on line 5, but the file ends at line 2')
  })

  it('a header line that is really metadata names the missing column', async () => {
    const e = await refusal(read(file('s,rpm,mph,F,F,psi'), { ...mapping, layout: { headerLine: 1, unitsRow: false, unitsFromRow: false } }))
    expect(e).toMatchObject({ code: 'missing_column', status: 400, column: 'Time' })
  })

  it('rows are numbered as file lines, metadata and units lines counted', async () => {
    const text = file('s,rpm,km/h,C,C,bar').replace('100,6000,100,212', '100,6000,1x0,212')
    const r = await analyzeLoggerStream(chunks(Buffer.from(text)), mapping, CFG, { maxBadRowShare: 1 })
    expect(r.warnings).toEqual([{ row: 6, column: 'Speed', message: 'Row 6, column "Speed": "1x0" is not a number' }])
  })
})
