// Streaming import of a data-logger CSV (plain CSV with a header row) into a TraceSummary.
// One pass over a Node stream: bytes are counted, hashed (SHA-256 of the file as sent) and
// checked, decoded as UTF-8 (logger-csv/bytes.ts), split into rows by papaparse's parser
// (here), converted (only the channels the analysis uses) into typed columns
// (logger-csv/rows.ts), and handed to the trace analyzer a block per chunk. No row is kept.
//
// The figures are an aid to the supplier's service instructions, inspection and licensed
// practice, never a substitute: a file that cannot be read with confidence is refused
// rather than half-counted. What is refused and what is skipped with a warning is listed in
// logger-csv/errors.ts.
// Silently accepted: blank lines (not counted as rows), an empty cell in an optional
// channel (that channel is absent for the sample, as with mixed-rate loggers), throttle and
// gear cells (not read).
//
// Rows are numbered as file lines, header = 1 (blank lines count). A quoted cell holding a
// line break would shift later numbers; logger exports do not write those.
// Clock timestamps (units.time = 'clock') count from the first data row; a time of day
// (no date) that falls back by more than 12 h is taken as passing midnight.

import type { Readable } from 'node:stream'
import Papa from 'papaparse'
import type { Parser as PapaParser } from 'papaparse'
import { LoggerMappingSchema, detectDelimiter, type LoggerMapping } from '../../shared/domain/logger-mapping'
import { createTraceAnalyzer, type TraceAnalyzer, type TraceConfig, type TraceSummary } from '../../shared/domain/trace'
import { LF, LoggerBytes } from './logger-csv/bytes'
import { LoggerImportError, SkippedRows, emptyFile, noDataRows, type LoggerImportWarning } from './logger-csv/errors'
import { RowConverter, isBlank } from './logger-csv/rows'

export { LoggerImportError, MAX_LISTED_WARNINGS, type LoggerImportWarning } from './logger-csv/errors'

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

/** The text stage: the header is the first non-blank line; the rows after it go through papaparse. */
class LoggerCsvReader {
  private readonly mapping: LoggerMapping
  private readonly analyzer: TraceAnalyzer
  private readonly onProgress?: (bytes: number) => void
  private readonly input: LoggerBytes
  private readonly skipped: SkippedRows

  private headerText = ''
  private pending = ''
  private headerLine = 0
  header: string[] = []
  delimiter = ','
  private parser: PapaParser | null = null
  private converter: RowConverter | null = null

  constructor(mapping: LoggerMapping, cfg: TraceConfig, opts: LoggerImportOptions) {
    this.mapping = mapping
    this.analyzer = createTraceAnalyzer(cfg)
    this.onProgress = opts.onProgress
    this.input = new LoggerBytes(opts.maxBytes ?? DEFAULT_MAX_BYTES, opts.maxLineLength ?? DEFAULT_MAX_LINE_LENGTH)
    this.skipped = new SkippedRows({
      maxBadRows: opts.maxBadRows ?? DEFAULT_MAX_BAD_ROWS,
      maxBadRowShare: opts.maxBadRowShare ?? DEFAULT_MAX_BAD_ROW_SHARE,
      decimalPoint: mapping.decimal !== ',',
    })
  }

  write(chunk: Buffer | string): void {
    const buf = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk
    if (buf.length === 0) return
    this.text(this.input.take(buf, this.completeLines(), this.parser !== null))
    this.onProgress?.(this.input.bytes)
  }

  /**
   * Lines handed on so far: every line before the one this chunk continues (the text
   * stage keeps no complete line back between chunks).
   */
  private completeLines(): number {
    return this.converter ? this.converter.line : this.headerLine
  }

  end(): LoggerImportResult {
    const sha256 = this.input.finish(this.completeLines(), this.parser !== null)
    if (!this.converter) {
      // no line break after the first non-blank line
      if (isBlank(this.headerText.replace(/[\r\n]/g, ''))) throw emptyFile()
      this.startData(this.headerText.replace(/[\r\n]+$/, ''))
      this.headerText = ''
    }
    const converter = this.converter!
    if (this.pending.length > 0) {
      const res = this.parser!.parse(this.pending, 0, false)
      this.pending = ''
      converter.take(res.data as string[][])
    }
    if (converter.rows === 0) throw noDataRows(this.headerLine)
    this.skipped.checkShare(converter.rows)
    return {
      summary: this.analyzer.finish(),
      sha256,
      bytes: this.input.bytes,
      rows: converter.rows,
      skippedRows: this.skipped.count,
      warnings: this.skipped.warnings,
      delimiter: this.delimiter,
      header: this.header,
    }
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
    this.delimiter = this.mapping.delimiter ?? detectDelimiter(line)
    const cells = line.indexOf('"') >= 0
      ? (Papa.parse<string[]>(line, { delimiter: this.delimiter, header: false }).data[0] ?? [])
      : line.split(this.delimiter)
    this.header = cells.map((c) => c.replace(/^\uFEFF/, '').trim())
    this.converter = new RowConverter(this.mapping, this.header, this.headerLine, this.analyzer, this.skipped)
    this.parser = new Papa.Parser({ delimiter: this.delimiter, newline: newline as '\n', header: false, skipEmptyLines: false })
  }

  private feed(text: string): void {
    const input = this.pending.length > 0 ? this.pending + text : text
    const res = this.parser!.parse(input, 0, true)
    const cursor: number = res.meta.cursor
    this.pending = cursor >= input.length ? '' : input.slice(cursor)
    this.converter!.take(res.data as string[][])
  }
}

/**
 * Reads a logger CSV stream once and returns the trace summary with the file's SHA-256.
 * Throws LoggerImportError for a file that must be refused (see logger-csv/errors.ts);
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
