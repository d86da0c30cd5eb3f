// Streaming import of a data-logger CSV (plain CSV with a header row) into a TraceSummary.
// One pass over a Node stream: bytes are counted, hashed (SHA-256 of the file as sent) and
// checked, decoded as UTF-8, split into rows by papaparse's parser, converted (only the
// channels the analysis uses) into typed columns, and handed to the trace analyzer a block
// per chunk. No row is kept.
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
//   a cell of an analysed channel that is not a number (or not a clock time), rpm outside 0..TRACE_MAX_RPM,
//   a negative speed, an empty time or rpm cell, a row with a different number of fields
//   than the header.
// Silently accepted: blank lines (not counted as rows), an empty cell in an optional
// channel (that channel is absent for the sample, as with mixed-rate loggers). Throttle and
// gear columns must exist when mapped, but they feed no figure yet, so their cells are not
// read: a glitch there does not cost a good rpm sample.
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
  createTraceBlock,
  type TraceAnalyzer,
  type TraceBlock,
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
  private decodedAny = false
  bytes = 0

  // byte-level line scan, for the line length limit
  private newlineByte = LF
  private newlineKnown = false
  private lineLen = 0 // bytes of the unfinished line carried from earlier chunks
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
  private decimalCode = 46
  private clock = false
  // Mapped numeric channels other than time: column index and the block column it fills.
  private valueIndex = new Int32Array(0)
  private valueColumns: Float64Array[] = []

  // one block of converted samples per parsed chunk, reused; unmapped channels stay NaN
  private block: TraceBlock = createTraceBlock(0)

  // rows
  rows = 0
  skippedRows = 0
  warnings: LoggerImportWarning[] = []
  private accepted = 0
  private lastT = NaN // read only once a row is accepted
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
    }
    if (!this.newlineKnown) this.detectNewline(buf)
    const lineAtChunk = this.completeLines()
    this.scanLines(buf, lineAtChunk)
    this.text(this.decode(buf, before, lineAtChunk))
    this.onProgress?.(this.bytes)
  }

  /**
   * Line ends are LF (or CR LF) unless the file's first line break is a lone CR (old-style
   * files). Decided at the first break, however small the chunks: a CR that ends a chunk
   * waits for the next chunk's first byte.
   */
  private detectNewline(buf: Buffer): void {
    if (this.lastByteCR) {
      this.newlineKnown = true
      if (buf[0] !== LF) {
        this.newlineByte = CR
        this.lineLen = 0 // that CR ended the line
      }
      return
    }
    const cr = buf.indexOf(CR)
    const lf = buf.indexOf(LF)
    if (cr < 0 && lf < 0) return
    if (cr < 0 || (lf >= 0 && lf < cr)) this.newlineKnown = true
    else if (cr + 1 < buf.length) {
      this.newlineKnown = true
      if (buf[cr + 1] !== LF) this.newlineByte = CR
    }
  }

  /**
   * Lines handed on so far: every line before the one this chunk continues (the text
   * stage keeps no complete line back between chunks).
   */
  private completeLines(): number {
    return this.parser ? this.dataLine : this.headerLine
  }

  // isUtf8 (simdutf) plus toString is several times faster than a fatal TextDecoder here.
  // A character split across chunks is carried; it sits on the unfinished line, so the
  // chunk's first line is still the carry's line.
  private decode(chunk: Buffer, byteOffset: number, line: number): string {
    let buf = chunk
    if (this.carry) {
      buf = Buffer.concat([this.carry, chunk])
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
    if (this.carry) this.throwBadUtf8(this.bytes, this.completeLines()) // file ends inside a character
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

  /**
   * The line length limit without a lookup per line: from the start of the current line,
   * the last line break within the next maxLineLength bytes is looked up backwards, so one
   * lookup passes a whole window of short lines. Only a window with no break in it is
   * looked at closely (a line of exactly the limit followed by CR LF is allowed).
   */
  private scanLines(buf: Buffer, lineAtChunk: number): void {
    const nl = this.newlineByte
    const max = this.maxLineLength
    const n = buf.length
    let start = -this.lineLen // where the current line began, relative to buf
    for (;;) {
      const edge = start + max // the byte after the longest allowed line
      if (edge >= n) break
      if (edge >= 0) {
        const at = buf.lastIndexOf(nl, edge)
        if (at >= 0 && at >= start) {
          start = at + 1
          continue
        }
      }
      const crAtEdge = edge >= 0 ? buf[edge] === CR : this.lastByteCR
      if (nl === LF && crAtEdge) {
        if (edge + 1 >= n) break // CR is the chunk's last byte: the next chunk tells
        if (buf[edge + 1] === LF) {
          start = edge + 2
          continue
        }
      }
      this.throwLongLine(lineAtChunk + this.breaksBefore(buf, start) + 1)
    }
    const last = buf.lastIndexOf(nl)
    this.lineLen = last >= 0 && last >= start ? n - last - 1 : n - start
    this.lastByteCR = buf[n - 1] === CR
    // a CR may still be followed by LF in the next chunk
    if (this.lineLen - (this.lastByteCR && nl === LF ? 1 : 0) > max) {
      this.throwLongLine(lineAtChunk + this.breaksBefore(buf, n) + 1)
    }
  }

  /** Only on failure: line breaks in buf before index `end`. */
  private breaksBefore(buf: Buffer, end: number): number {
    let count = 0
    for (let at = buf.indexOf(this.newlineByte); at >= 0 && at < end; at = buf.indexOf(this.newlineByte, at + 1)) count++
    return count
  }

  private throwLongLine(row: number): never {
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
    this.dataLine = this.headerLine
    this.growBlock(4096) // rows of a 64 KiB chunk and then some: no regrowth in the usual case
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

  /** A new, larger block (a chunk has more rows than the last one), with its column list. */
  private growBlock(capacity: number): void {
    const b = createTraceBlock(capacity)
    for (const col of [b.speedKmh, b.oilTempC, b.oilPressureBar, b.waterTempC]) col.fill(NaN)
    this.block = b
    const pairs: [number, Float64Array][] = [
      [this.iRpm, b.rpm],
      [this.iSpeed, b.speedKmh],
      [this.iOilTemp, b.oilTempC],
      [this.iOilPressure, b.oilPressureBar],
      [this.iWaterTemp, b.waterTempC],
    ]
    const mapped = pairs.filter(([i]) => i >= 0)
    this.valueIndex = Int32Array.from(mapped, ([i]) => i)
    this.valueColumns = mapped.map(([, col]) => col)
  }

  /**
   * Hot loop: one pass per row, numbers parsed straight into the block's columns (one
   * parse call site, so it is inlined and nothing is boxed), then the block goes to the
   * analyzer in one call. A row whose analysed cells all read as numbers goes straight
   * through; anything else takes rowProblem() to be told apart (a blank optional cell is
   * fine, the rest is reported).
   */
  private takeRows(rows: string[][]): void {
    if (rows.length > this.block.t.length) this.growBlock(rows.length)
    const ncol = this.ncol
    const dec = this.decimalCode
    const clock = this.clock
    const iTime = this.iTime
    const valueIndex = this.valueIndex
    const valueColumns = this.valueColumns
    const nvalues = valueIndex.length
    const { t: T, rpm: RPM, speedKmh: SPEED } = this.block
    let k = 0
    let accepted = this.accepted
    let lastT = this.lastT
    let lastTLine = this.lastTLine
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
      let unreadable = t !== t
      for (let c = 0; c < nvalues; c++) {
        const v = parseDecimal(row[valueIndex[c]!]!, dec)
        valueColumns[c]![k] = v
        if (v !== v) unreadable = true
      }
      const rpm = RPM[k]!
      const speed = SPEED[k]!
      if (unreadable || rpm < 0 || rpm > TRACE_MAX_RPM || speed < 0 || speed > TRACE_MAX_SPEED) {
        if (this.rowProblem(row, line)) continue
      }
      if (accepted > 0 && t <= lastT) this.throwTimeOrder(row[iTime]!, t, line, lastT, lastTLine)
      T[k++] = t
      accepted++
      lastT = t
      lastTLine = line
    }
    this.accepted = accepted
    this.lastT = lastT
    this.lastTLine = lastTLine
    this.convertUnits(k)
    this.analyzer.pushBlock(this.block, k)
  }

  private convertUnits(count: number): void {
    const { speed, temperature, pressure } = this.mapping.units
    const b = this.block
    if (speed !== 'kmh') for (let i = 0; i < count; i++) b.speedKmh[i] = toKmh(b.speedKmh[i]!, speed)
    if (temperature !== 'C') {
      for (let i = 0; i < count; i++) {
        b.oilTempC[i] = toCelsius(b.oilTempC[i]!, temperature)
        b.waterTempC[i] = toCelsius(b.waterTempC[i]!, temperature)
      }
    }
    if (pressure !== 'bar') for (let i = 0; i < count; i++) b.oilPressureBar[i] = toBar(b.oilPressureBar[i]!, pressure)
  }

  /** Reports the first unreadable analysed cell of the row and returns true; false when the row is fine after all. */
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
    for (const col of [this.iSpeed, this.iOilTemp, this.iOilPressure, this.iWaterTemp]) {
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

  private throwTimeOrder(cell: string, t: number, line: number, lastT: number, lastTLine: number): never {
    const col = this.header[this.iTime]!
    if (t === lastT) {
      throw new LoggerImportError('time_duplicate', `Row ${line}, column "${col}": ${quoteCell(cell)} repeats the timestamp of row ${lastTLine}`, { row: line, column: col })
    }
    throw new LoggerImportError('time_backwards', `Row ${line}, column "${col}": ${quoteCell(cell)} is earlier than row ${lastTLine}`, { row: line, column: col })
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
  input: Readable,
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
