// Streaming import of a data-logger CSV (plain CSV with a header row) into a TraceSummary.
// One pass over a Node stream: bytes are counted, hashed (SHA-256 of the file as sent) and
// checked, decoded as UTF-8, split into rows by papaparse's parser, converted (only the
// mapped columns) and pushed into the trace analyzer. No row is kept.
//
// The figures are an aid to the supplier's service instructions, inspection and licensed
// practice, never a substitute: a file that cannot be read with confidence is refused
// rather than half-counted.
//
// Fatal (LoggerImportError, nothing is recorded):
//   invalid_mapping      the mapping does not satisfy LoggerMappingSchema              400
//   empty_file           no bytes, or only blank lines / a BOM                          400
//   not_text             NUL bytes or invalid UTF-8 within the first 8 KiB / the header 400
//   invalid_utf8         invalid UTF-8 further on; row                                   400
//   file_too_large       more than maxBytes (default 200 MiB)                           413
//   line_too_long        a line longer than maxLineLength bytes (default 4096); row     400
//   missing_column       a mapped column is not in the header; column                   400
//   duplicate_column     a mapped column name appears twice in the header; column       400
//   no_data_rows         a header and no data rows                                      400
//   time_backwards       a timestamp earlier than the previous row's; row, column       400
//   time_duplicate       a timestamp equal to the previous row's; row, column           400
//   too_many_bad_rows    more skipped rows than maxBadRows (default 1000) or than
//                        maxBadRowShare (default 1 %) of the data rows, at least 1 row  400
// Warning (row skipped, counted in skippedRows, the first 50 listed with row and column):
//   a mapped cell that is not a number (or not a clock time), rpm outside 0..TRACE_MAX_RPM,
//   a negative speed, an empty time or rpm cell, a row with a different number of fields
//   than the header.
// Silently accepted: blank lines (not counted as rows), an empty cell in an optional
// channel (that channel is absent for the sample, as with mixed-rate loggers).
//
// Rows are numbered as file lines, header = 1 (blank lines count). A quoted cell holding a
// line break would shift later numbers; logger exports do not write those.
// Clock timestamps (units.time = 'clock') count from the first data row; a time of day
// (no date) that falls back by more than 12 h is taken as passing midnight.

import { isUtf8 } from 'node:buffer'
import { createHash } from 'node:crypto'
import type { Readable } from 'node:stream'
import Papa from 'papaparse'
import type { Parser as PapaParser } from 'papaparse'
import {
  LoggerMappingSchema,
  LOGGER_CHANNELS,
  detectDelimiter,
  parseClock,
  parseDecimal,
  type LoggerChannel,
  type LoggerMapping,
} from '../../shared/domain/logger-mapping'
import { toBar, toCelsius, toKmh } from '../../shared/domain/units'
import {
  TRACE_MAX_RPM,
  TRACE_MAX_SPEED,
  createTraceAnalyzer,
  type TraceAnalyzer,
  type TraceConfig,
  type TraceSummary,
} from '../../shared/domain/trace'

export class LoggerImportError extends Error {
  code: string
  row?: number
  column?: string
  status: number
  constructor(code: string, message: string, extra: { row?: number; column?: string; status?: number } = {}) {
    super(message)
    this.name = 'LoggerImportError'
    this.code = code
    if (extra.row !== undefined) this.row = extra.row
    if (extra.column !== undefined) this.column = extra.column
    this.status = extra.status ?? 400
  }
}

export interface LoggerImportWarning {
  row: number
  column?: string
  message: string
}

export interface LoggerImportResult {
  summary: TraceSummary
  sha256: string
  bytes: number
  /** data rows read, skipped ones included, blank lines not */
  rows: number
  skippedRows: number
  /** at most MAX_LISTED_WARNINGS; skippedRows counts all */
  warnings: LoggerImportWarning[]
  delimiter: string
  header: string[]
}

export interface LoggerImportOptions {
  maxBytes?: number
  maxLineLength?: number
  maxBadRowShare?: number
  maxBadRows?: number
  onProgress?: (bytes: number) => void
}

export const DEFAULT_MAX_BYTES = 200 * 1024 * 1024
export const DEFAULT_MAX_LINE_LENGTH = 4096
export const DEFAULT_MAX_BAD_ROW_SHARE = 0.01
export const DEFAULT_MAX_BAD_ROWS = 1000
export const MAX_LISTED_WARNINGS = 50
/** How far into the file NUL bytes or bad UTF-8 mean "not a text file". */
const TEXT_SNIFF_BYTES = 8192

const LF = 10
const CR = 13

function quoteCell(cell: string): string {
  const s = cell.length > 40 ? `${cell.slice(0, 40)}…` : cell
  return JSON.stringify(s)
}

function isBlank(s: string): boolean {
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i)
    if (c !== 32 && c !== 9 && c !== CR) return false
  }
  return true
}

/** Column index of each mapped channel, -1 when not mapped. */
function resolveColumns(header: string[], columns: LoggerMapping['columns']): Record<LoggerChannel, number> {
  const out = {} as Record<LoggerChannel, number>
  const lower = header.map((h) => h.toLowerCase())
  for (const ch of LOGGER_CHANNELS) {
    const wanted = columns[ch]?.trim()
    if (!wanted) {
      out[ch] = -1
      continue
    }
    let idx = header.indexOf(wanted)
    let again = idx >= 0 ? header.indexOf(wanted, idx + 1) : -1
    if (idx < 0) {
      // a saved mapping may differ in case from a later export of the same logger
      const w = wanted.toLowerCase()
      idx = lower.indexOf(w)
      again = idx >= 0 ? lower.indexOf(w, idx + 1) : -1
    }
    if (idx < 0) {
      throw new LoggerImportError('missing_column', `Column "${wanted}" (mapped to ${ch}) is not in the header`, { row: 1, column: wanted })
    }
    if (again >= 0) {
      throw new LoggerImportError('duplicate_column', `Column "${wanted}" (mapped to ${ch}) appears more than once in the header`, { row: 1, column: wanted })
    }
    out[ch] = idx
  }
  return out
}

class LoggerCsvReader {
  private readonly mapping: LoggerMapping
  private readonly analyzer: TraceAnalyzer
  private readonly maxBytes: number
  private readonly maxLineLength: number
  private readonly maxBadRowShare: number
  private readonly maxBadRows: number
  private readonly onProgress?: (bytes: number) => void

  private readonly hash = createHash('sha256')
  // UTF-8 bytes of a character split across chunks, carried to the next chunk
  private carry: Buffer | null = null
  private carryLine = 0
  private decodedAny = false
  bytes = 0

  // byte-level line scan, for the line length limit
  private newlineByte = LF
  private lineNo = 0 // complete lines seen
  private lineLen = 0
  private lastByteCR = false

  // text stage
  private headerText = ''
  private pending = ''
  private headerLine = 0
  header: string[] = []
  delimiter = ','
  private parser: PapaParser | null = null
  private dataLine = 0 // file line of the last row handed out by the parser

  // columns
  private ncol = 0
  private iTime = -1
  private iRpm = -1
  private iSpeed = -1
  private iOilTemp = -1
  private iOilPressure = -1
  private iWaterTemp = -1
  private iThrottle = -1
  private iGear = -1
  private decimalCode = 46
  private clock = false

  // rows
  rows = 0
  skippedRows = 0
  warnings: LoggerImportWarning[] = []
  private accepted = 0
  private lastT = 0
  private lastTLine = 0
  private clockStarted = false
  private clockT0 = 0
  private clockDayOffset = 0
  private lastClockRaw = 0

  constructor(mapping: LoggerMapping, cfg: TraceConfig, opts: LoggerImportOptions) {
    this.mapping = mapping
    this.analyzer = createTraceAnalyzer(cfg)
    this.maxBytes = opts.maxBytes ?? DEFAULT_MAX_BYTES
    this.maxLineLength = opts.maxLineLength ?? DEFAULT_MAX_LINE_LENGTH
    this.maxBadRowShare = opts.maxBadRowShare ?? DEFAULT_MAX_BAD_ROW_SHARE
    this.maxBadRows = opts.maxBadRows ?? DEFAULT_MAX_BAD_ROWS
    this.onProgress = opts.onProgress
    this.decimalCode = mapping.decimal === ',' ? 44 : 46
    this.clock = mapping.units.time === 'clock'
  }

  write(chunk: Buffer | string): void {
    const buf = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk
    if (buf.length === 0) return
    const before = this.bytes
    if (before + buf.length > this.maxBytes) {
      throw new LoggerImportError('file_too_large', `The file is larger than the limit of ${this.maxBytes} bytes`, { status: 413 })
    }
    this.bytes += buf.length
    this.hash.update(buf)
    if (before < TEXT_SNIFF_BYTES) {
      const head = buf.subarray(0, TEXT_SNIFF_BYTES - before)
      if (head.indexOf(0) >= 0) throw new LoggerImportError('not_text', 'The file is not a text CSV (it contains NUL bytes)')
      if (before === 0) {
        const cr = head.indexOf(CR)
        if (cr >= 0 && cr + 1 < head.length && head[cr + 1] !== LF) {
          const lf = head.indexOf(LF)
          if (lf < 0 || lf > cr) this.newlineByte = CR // old-style CR-only line ends
        }
      }
    }
    const lineAtChunk = this.lineNo // 0-based line where this chunk starts
    this.scanLines(buf)
    this.text(this.decode(buf, before, lineAtChunk))
    this.onProgress?.(this.bytes)
  }

  // isUtf8 (simdutf) plus toString is several times faster than a fatal TextDecoder here.
  private decode(chunk: Buffer, byteOffset: number, chunkLine: number): string {
    let buf = chunk
    let line = chunkLine
    if (this.carry) {
      buf = Buffer.concat([this.carry, chunk])
      line = this.carryLine
      this.carry = null
    }
    // hold back an incomplete multi-byte sequence at the end
    let cut = buf.length
    for (let k = buf.length - 1, back = 0; k >= 0 && back < 4; k--, back++) {
      const b = buf[k]!
      if ((b & 0xc0) === 0x80) continue // continuation byte
      if (b >= 0xc0) {
        const need = b >= 0xf0 ? 4 : b >= 0xe0 ? 3 : 2
        if (buf.length - k < need) cut = k
      }
      break
    }
    if (cut < buf.length) {
      this.carry = Buffer.from(buf.subarray(cut))
      this.carryLine = this.lineNo
      buf = buf.subarray(0, cut)
    }
    if (!isUtf8(buf)) this.throwBadUtf8(byteOffset, line + this.linesBeforeBadUtf8(buf))
    let text = buf.toString('utf8')
    if (!this.decodedAny && text.length > 0) {
      this.decodedAny = true
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1)
    }
    return text
  }

  end(): LoggerImportResult {
    if (this.carry) this.throwBadUtf8(this.bytes, this.lineNo) // file ends inside a character
    if (!this.parser) {
      // no line break after the first non-blank line
      if (isBlank(this.headerText.replace(/[\r\n]/g, ''))) throw new LoggerImportError('empty_file', 'The file is empty')
      this.startData(this.headerText.replace(/[\r\n]+$/, ''))
      this.headerText = ''
    }
    if (this.pending.length > 0) {
      const res = this.parser!.parse(this.pending, 0, false)
      this.pending = ''
      this.takeRows(res.data as string[][])
    }
    if (this.rows === 0) throw new LoggerImportError('no_data_rows', 'The file has a header but no data rows', { row: this.headerLine })
    const allowed = Math.min(this.maxBadRows, Math.max(1, Math.floor(this.maxBadRowShare * this.rows)))
    if (this.skippedRows > allowed) this.throwTooManyBad(allowed)
    return {
      summary: this.analyzer.finish(),
      sha256: this.hash.digest('hex'),
      bytes: this.bytes,
      rows: this.rows,
      skippedRows: this.skippedRows,
      warnings: this.warnings,
      delimiter: this.delimiter,
      header: this.header,
    }
  }

  /** Only on failure: complete lines of buf before the one holding the bad bytes. */
  private linesBeforeBadUtf8(buf: Buffer): number {
    let lines = 0
    let from = 0
    for (;;) {
      const at = buf.indexOf(this.newlineByte, from)
      const end = at < 0 ? buf.length : at
      if (!isUtf8(buf.subarray(from, end))) return lines
      if (at < 0) return lines
      lines++
      from = at + 1
    }
  }

  private throwBadUtf8(byteOffset: number, line: number): never {
    if (byteOffset < TEXT_SNIFF_BYTES || !this.parser) {
      throw new LoggerImportError('not_text', 'The file is not a text CSV (it is not valid UTF-8)')
    }
    throw new LoggerImportError('invalid_utf8', `Row ${line + 1} is not valid UTF-8 text`, { row: line + 1 })
  }

  private throwTooManyBad(allowed: number): never {
    const first = this.warnings[0]
    const hint = first && this.decimalCode === 46 && /"-?\d+,\d+"/.test(first.message) ? ' (the file may use a decimal comma)' : ''
    throw new LoggerImportError(
      'too_many_bad_rows',
      `Too many unreadable rows: ${this.skippedRows} of ${this.rows} (at most ${allowed} may be skipped)${hint}. First: ${first?.message ?? ''}`,
      first ? { row: first.row, column: first.column } : {},
    )
  }

  private scanLines(buf: Buffer): void {
    const nl = this.newlineByte
    const max = this.maxLineLength
    let pos = 0
    for (;;) {
      const at = buf.indexOf(nl, pos)
      if (at < 0) {
        this.lineLen += buf.length - pos
        this.lastByteCR = buf[buf.length - 1] === CR
        // a CR may still be followed by LF in the next chunk
        if (this.lineLen - (this.lastByteCR ? 1 : 0) > max) this.throwLongLine()
        return
      }
      this.lineLen += at - pos
      const cr = at > 0 ? buf[at - 1] === CR : this.lastByteCR
      if (this.lineLen - (cr && nl === LF ? 1 : 0) > max) this.throwLongLine()
      this.lineNo++
      this.lineLen = 0
      pos = at + 1
    }
  }

  private throwLongLine(): never {
    const row = this.lineNo + 1
    throw new LoggerImportError('line_too_long', `Row ${row} is longer than ${this.maxLineLength} bytes`, { row })
  }

  private text(text: string): void {
    if (this.parser) {
      this.feed(text)
      return
    }
    this.headerText += text
    // the header is the first non-blank line
    for (;;) {
      const s = this.headerText
      const lf = s.indexOf('\n')
      const cr = s.indexOf('\r')
      let end: number
      let next: number
      if (lf < 0 && cr < 0) return
      if (cr >= 0 && (lf < 0 || cr < lf)) {
        if (cr === s.length - 1 && lf < 0) return // wait: CR may be the first half of CRLF
        end = cr
        next = s.charCodeAt(cr + 1) === LF ? cr + 2 : cr + 1
      } else {
        end = lf
        next = lf + 1
      }
      const line = s.slice(0, end)
      this.headerLine++
      this.headerText = s.slice(next)
      if (isBlank(line)) continue
      this.startData(line, s.slice(end, next))
      const rest = this.headerText
      this.headerText = ''
      if (rest) this.feed(rest)
      return
    }
  }

  private startData(line: string, newline = '\n'): void {
    if (this.headerLine === 0) this.headerLine = 1
    const m = this.mapping
    this.delimiter = m.delimiter ?? detectDelimiter(line)
    const cells = line.indexOf('"') >= 0
      ? (Papa.parse<string[]>(line, { delimiter: this.delimiter, header: false }).data[0] ?? [])
      : line.split(this.delimiter)
    this.header = cells.map((c) => c.replace(/^\uFEFF/, '').trim())
    this.ncol = this.header.length
    const idx = resolveColumns(this.header, m.columns)
    this.iTime = idx.time
    this.iRpm = idx.rpm
    this.iSpeed = idx.speed
    this.iOilTemp = idx.oilTemp
    this.iOilPressure = idx.oilPressure
    this.iWaterTemp = idx.waterTemp
    this.iThrottle = idx.throttle
    this.iGear = idx.gear
    this.dataLine = this.headerLine
    this.parser = new Papa.Parser({ delimiter: this.delimiter, newline: newline as '\n', header: false, skipEmptyLines: false })
  }

  private feed(text: string): void {
    const input = this.pending.length > 0 ? this.pending + text : text
    const res = this.parser!.parse(input, 0, true)
    const cursor: number = res.meta.cursor
    this.pending = cursor >= input.length ? '' : input.slice(cursor)
    this.takeRows(res.data as string[][])
  }

  private skip(line: number, column: string | undefined, message: string): void {
    this.skippedRows++
    if (this.warnings.length < MAX_LISTED_WARNINGS) {
      this.warnings.push(column === undefined ? { row: line, message } : { row: line, column, message })
    }
    if (this.skippedRows > this.maxBadRows) this.throwTooManyBad(this.maxBadRows)
  }

  /**
   * Hot loop: one pass per row with the column indices in locals. A row whose cells all
   * read as numbers goes straight through; anything else takes rowProblem() to be told
   * apart (a blank optional cell is fine, the rest is reported).
   */
  private takeRows(rows: string[][]): void {
    const ncol = this.ncol
    const dec = this.decimalCode
    const units = this.mapping.units
    const convSpeed = units.speed !== 'kmh'
    const convTemp = units.temperature !== 'C'
    const convPressure = units.pressure !== 'bar'
    const clock = this.clock
    const iTime = this.iTime
    const iRpm = this.iRpm
    const iSpeed = this.iSpeed
    const iOilTemp = this.iOilTemp
    const iOilPressure = this.iOilPressure
    const iWaterTemp = this.iWaterTemp
    const iThrottle = this.iThrottle
    const iGear = this.iGear
    const analyzer = this.analyzer
    for (let r = 0; r < rows.length; r++) {
      const row = rows[r]!
      const line = ++this.dataLine
      if (row.length !== ncol) {
        if (row.length === 1 && isBlank(row[0]!)) continue
        this.rows++
        this.skip(line, undefined, `Row ${line}: ${row.length} field${row.length === 1 ? '' : 's'}, the header has ${ncol}`)
        continue
      }
      this.rows++

      let t: number
      if (clock) {
        const raw = parseClock(row[iTime]!)
        t = raw === null ? NaN : this.clockSeconds(raw)
      } else t = parseDecimal(row[iTime]!, dec)
      const rpm = parseDecimal(row[iRpm]!, dec)
      let speed = iSpeed >= 0 ? parseDecimal(row[iSpeed]!, dec) : NaN
      let oilT = iOilTemp >= 0 ? parseDecimal(row[iOilTemp]!, dec) : NaN
      let oilP = iOilPressure >= 0 ? parseDecimal(row[iOilPressure]!, dec) : NaN
      let waterT = iWaterTemp >= 0 ? parseDecimal(row[iWaterTemp]!, dec) : NaN
      // throttle and gear feed no figure yet; they are still read so a corrupt row is caught
      const throttle = iThrottle >= 0 ? parseDecimal(row[iThrottle]!, dec) : 0
      const gear = iGear >= 0 ? parseDecimal(row[iGear]!, dec) : 0

      if (
        t !== t || rpm !== rpm || rpm < 0 || rpm > TRACE_MAX_RPM || speed < 0 || speed > TRACE_MAX_SPEED ||
        (speed !== speed && iSpeed >= 0) || (oilT !== oilT && iOilTemp >= 0) ||
        (oilP !== oilP && iOilPressure >= 0) || (waterT !== waterT && iWaterTemp >= 0) ||
        throttle !== throttle || gear !== gear
      ) {
        if (this.rowProblem(row, line)) continue
      }
      if (convSpeed && speed === speed) speed = toKmh(speed, units.speed)
      if (convTemp) {
        if (oilT === oilT) oilT = toCelsius(oilT, units.temperature)
        if (waterT === waterT) waterT = toCelsius(waterT, units.temperature)
      }
      if (convPressure && oilP === oilP) oilP = toBar(oilP, units.pressure)

      if (this.accepted > 0 && t <= this.lastT) this.throwTimeOrder(row[iTime]!, t, line)
      this.accepted++
      this.lastT = t
      this.lastTLine = line
      analyzer.pushValues(t, rpm, speed, oilT, oilP, waterT)
    }
  }

  /** Reports the first unreadable mapped cell of the row and returns true; false when the row is fine after all. */
  private rowProblem(row: string[], line: number): boolean {
    const dec = this.decimalCode
    const tCell = row[this.iTime]!
    if (isBlank(tCell)) return this.badCell(line, this.iTime, 'the time is empty')
    if (this.clock ? parseClock(tCell) === null : Number.isNaN(parseDecimal(tCell, dec))) {
      return this.badCell(line, this.iTime, this.clock
        ? `${quoteCell(tCell)} is not a clock time (hh:mm:ss.sss or an ISO date-time)`
        : `${quoteCell(tCell)} is not a number`)
    }
    const rpmCell = row[this.iRpm]!
    if (isBlank(rpmCell)) return this.badCell(line, this.iRpm, 'the rpm is empty')
    const rpm = parseDecimal(rpmCell, dec)
    if (rpm !== rpm) return this.badCell(line, this.iRpm, `${quoteCell(rpmCell)} is not a number`)
    if (rpm < 0 || rpm > TRACE_MAX_RPM) return this.badCell(line, this.iRpm, `${rpm} is outside 0..${TRACE_MAX_RPM} rpm`)
    for (const col of [this.iSpeed, this.iOilTemp, this.iOilPressure, this.iWaterTemp, this.iThrottle, this.iGear]) {
      if (col < 0) continue
      const cell = row[col]!
      if (isBlank(cell)) continue
      const v = parseDecimal(cell, dec)
      if (v !== v) return this.badCell(line, col, `${quoteCell(cell)} is not a number`)
      if (col === this.iSpeed && v < 0) return this.badCell(line, col, `${v} is below 0`)
      if (col === this.iSpeed && v > TRACE_MAX_SPEED) return this.badCell(line, col, `${v} is above ${TRACE_MAX_SPEED}, more than any vehicle runs`)
    }
    return false
  }

  private badCell(line: number, col: number, message: string): true {
    this.skip(line, this.header[col], `Row ${line}, column "${this.header[col]}": ${message}`)
    return true
  }

  private throwTimeOrder(cell: string, t: number, line: number): never {
    const col = this.header[this.iTime]!
    if (t === this.lastT) {
      throw new LoggerImportError('time_duplicate', `Row ${line}, column "${col}": ${quoteCell(cell)} repeats the timestamp of row ${this.lastTLine}`, { row: line, column: col })
    }
    throw new LoggerImportError('time_backwards', `Row ${line}, column "${col}": ${quoteCell(cell)} is earlier than row ${this.lastTLine}`, { row: line, column: col })
  }

  /** Seconds from the first data row; a time of day that falls back > 12 h passed midnight. */
  private clockSeconds(raw: number): number {
    if (!this.clockStarted) {
      this.clockStarted = true
      this.clockT0 = raw
      this.lastClockRaw = raw
      return 0
    }
    if (raw < 86400 && raw + this.clockDayOffset < this.lastClockRaw - 43200) this.clockDayOffset += 86400
    const v = raw + this.clockDayOffset
    this.lastClockRaw = v
    return v - this.clockT0
  }
}

/**
 * Reads a logger CSV stream once and returns the trace summary with the file's SHA-256.
 * Throws LoggerImportError for a file that must be refused (see the list at the top);
 * errors of the stream itself are passed on unchanged.
 */
export async function analyzeLoggerStream(
  input: NodeJS.ReadableStream | Readable,
  mapping: LoggerMapping,
  cfg: TraceConfig,
  opts: LoggerImportOptions = {},
): Promise<LoggerImportResult> {
  const parsed = LoggerMappingSchema.safeParse(mapping)
  if (!parsed.success) {
    const issue = parsed.error.issues[0]
    throw new LoggerImportError('invalid_mapping', `Invalid column mapping: ${issue?.path.join('.') ?? ''} ${issue?.message ?? ''}`.trim())
  }
  const reader = new LoggerCsvReader(parsed.data, cfg, opts)
  for await (const chunk of input as AsyncIterable<Buffer | string>) reader.write(chunk)
  return reader.end()
}
