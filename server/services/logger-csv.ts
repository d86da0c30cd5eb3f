// Streaming import of a data-logger CSV into a TraceSummary.
// One pass over a Node stream: bytes are counted, hashed (SHA-256 of the file as sent) and
// checked (logger-csv/bytes.ts); the lines before the data (metadata lines, channel names, an
// optional units row; logger-csv/head.ts) are read as text; the data rows are read straight
// from the bytes (logger-csv/scan.ts), only the channels the analysis uses, into typed columns
// (logger-csv/rows.ts) handed to the trace analyzer a block at a time. No row is kept.
// papaparse's parser can read the rows instead (`rowReader: 'papaparse'`): the reference the
// tests hold the byte scanner to.
//
// The figures are an aid to the supplier's service instructions, inspection and licensed
// practice, never a substitute: a file that cannot be read with confidence is refused
// rather than half-counted. What is refused and what is skipped with a warning is listed in
// logger-csv/errors.ts.
// Silently accepted: blank lines (not counted as rows), an empty cell in an optional
// channel (that channel is absent for the sample, as with mixed-rate loggers), throttle and
// gear cells (not read).
//
// Rows are numbered as file lines, first line = 1 (blank and metadata lines count). A quoted
// cell holding a line break would shift later numbers; logger exports do not write those.
// Clock timestamps (units.time = 'clock') count from the first data row; a time of day
// (no date) that falls back by more than 12 h is taken as passing midnight.

import type { Readable } from 'node:stream'
import { LoggerMappingSchema, type LoggerMapping } from '../../shared/domain/logger-mapping'
import { createTraceAnalyzer, type TraceAnalyzer, type TraceConfig, type TraceSummary } from '../../shared/domain/trace'
import { LoggerBytes } from './logger-csv/bytes'
import { LoggerImportError, SkippedRows, noDataRows, type LoggerImportWarning } from './logger-csv/errors'
import { HeadStage } from './logger-csv/head'
import { PapaRows } from './logger-csv/papa-rows'
import { RowConverter } from './logger-csv/rows'
import { RowScanner } from './logger-csv/scan'

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
  /** metadata lines before the channel names (at most 50, each cut to 200 characters) */
  preamble: string[]
  /** the units the file was read in (the mapping's, or its units row's) */
  units: LoggerMapping['units']
}

export interface LoggerImportOptions {
  maxBytes?: number
  maxLineLength?: number
  maxBadRowShare?: number
  maxBadRows?: number
  onProgress?: (bytes: number) => void
  /** 'scan' (the default) reads rows from the bytes; 'papaparse' is the reference */
  rowReader?: 'scan' | 'papaparse'
}

export const DEFAULT_MAX_BYTES = 8 * 1024 * 1024 * 1024
export const DEFAULT_MAX_LINE_LENGTH = 4096
export const DEFAULT_MAX_BAD_ROW_SHARE = 0.01
export const DEFAULT_MAX_BAD_ROWS = 1000

/** Bytes checked, then the head lines, then the data rows. */
class LoggerCsvReader {
  private readonly mapping: LoggerMapping
  private readonly analyzer: TraceAnalyzer
  private readonly onProgress?: (bytes: number) => void
  private readonly input: LoggerBytes
  private readonly skipped: SkippedRows
  private readonly head: HeadStage
  private readonly rowReader: 'scan' | 'papaparse'
  private converter: RowConverter | null = null
  private rows: RowScanner | PapaRows | null = null

  constructor(mapping: LoggerMapping, cfg: TraceConfig, opts: LoggerImportOptions) {
    this.mapping = mapping
    this.analyzer = createTraceAnalyzer(cfg)
    this.onProgress = opts.onProgress
    this.rowReader = opts.rowReader ?? 'scan'
    this.input = new LoggerBytes(opts.maxBytes ?? DEFAULT_MAX_BYTES, opts.maxLineLength ?? DEFAULT_MAX_LINE_LENGTH)
    this.head = new HeadStage(mapping)
    this.skipped = new SkippedRows({
      maxBadRows: opts.maxBadRows ?? DEFAULT_MAX_BAD_ROWS,
      maxBadRowShare: opts.maxBadRowShare ?? DEFAULT_MAX_BAD_ROW_SHARE,
      decimalPoint: mapping.decimal !== ',',
    })
  }

  write(chunk: Buffer | string): void {
    const buf = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk
    if (buf.length === 0) return
    const bytes = this.input.take(buf, this.completeLines(), this.rows !== null)
    if (this.rows) this.rows.take(bytes)
    else {
      const rest = this.head.take(bytes)
      if (rest) {
        this.startRows()
        if (rest.length > 0) this.rows!.take(rest)
      }
    }
    this.onProgress?.(this.input.bytes)
  }

  /** Lines handed on so far (no complete line is kept back between chunks), to name a row. */
  private completeLines(): number {
    return this.converter ? this.converter.line : this.head.line
  }

  private startRows(): void {
    const h = this.head.result!
    this.converter = new RowConverter(this.mapping, h, this.analyzer, this.skipped)
    this.rows = this.rowReader === 'scan' ? new RowScanner(this.converter, h.delimiter, h.newline) : new PapaRows(this.converter, h.delimiter, h.newline)
  }

  end(): LoggerImportResult {
    const sha256 = this.input.finish(this.completeLines(), this.rows !== null)
    if (!this.rows) this.startRowsAtEnd()
    this.rows!.finish()
    const converter = this.converter!
    const h = this.head.result!
    if (converter.rows === 0) throw noDataRows(h.headerLine)
    this.skipped.checkShare(converter.rows)
    return {
      summary: this.analyzer.finish(),
      sha256,
      bytes: this.input.bytes,
      rows: converter.rows,
      skippedRows: this.skipped.count,
      warnings: this.skipped.warnings,
      delimiter: h.delimiter,
      header: h.header,
      preamble: h.preamble,
      units: converter.units,
    }
  }

  private startRowsAtEnd(): void {
    this.head.finish()
    this.startRows()
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
