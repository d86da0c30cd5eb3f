// What a logger import reports: the refusals (LoggerImportError, nothing is recorded) and the
// skipped rows (warnings), each naming the row (file line, header = 1) and the column.
//
// Fatal:
//   invalid_mapping      the mapping does not satisfy LoggerMappingSchema              400
//   empty_file           no bytes, or only blank lines / a BOM                          400
//   not_text             NUL bytes or invalid UTF-8 within the first 8 KiB / the header 400
//   invalid_utf8         invalid UTF-8 further on; row                                   400
//   file_too_large       more than maxBytes (default 200 MiB)                           413
//   line_too_long        a line longer than maxLineLength bytes (default 4096); row     400
//   missing_column       a mapped column is not in the header; column                   400
//   duplicate_column     a mapped column name appears twice in the header; column       400
//   no_data_rows         a header and no data rows                                      400
//   no_header            the layout puts the channel names on a line the file never reaches 400
//   unknown_unit         the units row names a unit not read, for a mapped channel; row   400
//   unclosed_quote       a quoted cell that runs on for more than 1 MiB; row              400
//   bad_gzip             a compressed upload whose gzip stream is corrupt or cut off      400
//                        (raised by the import service, which decompresses)
//   time_backwards       a timestamp earlier than the previous row's; row, column       400
//   time_duplicate       a timestamp equal to the previous row's; row, column           400
//   too_many_bad_rows    more skipped rows than maxBadRows (default 1000) or than
//                        maxBadRowShare (default 1 %) of the data rows, at least 1 row  400
// Warning (row skipped, counted in skippedRows, the first 50 listed with row and column):
//   a cell of an analysed channel that is not a number (or not a clock time), rpm outside 0..TRACE_MAX_RPM,
//   a negative speed, an empty time or rpm cell, a row with a different number of fields
//   than the header.

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

export const MAX_LISTED_WARNINGS = 50

/** A cell as quoted in a message: JSON-escaped, long ones cut. */
export function quoteCell(cell: string): string {
  const s = cell.length > 40 ? `${cell.slice(0, 40)}…` : cell
  return JSON.stringify(s)
}

export const fileTooLarge = (maxBytes: number) =>
  new LoggerImportError('file_too_large', `The file is larger than the limit of ${maxBytes} bytes`, { status: 413 })

export const notText = (why: string) => new LoggerImportError('not_text', `The file is not a text CSV (${why})`)

export const invalidUtf8 = (row: number) => new LoggerImportError('invalid_utf8', `Row ${row} is not valid UTF-8 text`, { row })

export const lineTooLong = (row: number, maxLineLength: number) =>
  new LoggerImportError('line_too_long', `Row ${row} is longer than ${maxLineLength} bytes`, { row })

export const emptyFile = () => new LoggerImportError('empty_file', 'The file is empty')

export const noDataRows = (headerLine: number) => new LoggerImportError('no_data_rows', 'The file has a header but no data rows', { row: headerLine })

export const noHeader = (headerLine: number, lastLine: number) =>
  new LoggerImportError('no_header', `The channel names should be on line ${headerLine}, but the file ends at line ${lastLine}`, { row: lastLine })

export const unknownUnit = (row: number, column: string, cell: string, choices: string) =>
  new LoggerImportError('unknown_unit', `Row ${row}, column "${column}": unit ${quoteCell(cell)} is not one that can be read (${choices})`, { row, column })

export const unclosedQuote = (row: number) =>
  new LoggerImportError('unclosed_quote', `Row ${row}: a quoted cell is not closed`, { row })

export const missingColumn = (column: string, channel: string) =>
  new LoggerImportError('missing_column', `Column "${column}" (mapped to ${channel}) is not in the header`, { row: 1, column })

export const duplicateColumn = (column: string, channel: string) =>
  new LoggerImportError('duplicate_column', `Column "${column}" (mapped to ${channel}) appears more than once in the header`, { row: 1, column })

export function timeOrderError(column: string, cell: string, t: number, line: number, lastT: number, lastTLine: number): LoggerImportError {
  if (t === lastT) {
    return new LoggerImportError('time_duplicate', `Row ${line}, column "${column}": ${quoteCell(cell)} repeats the timestamp of row ${lastTLine}`, { row: line, column })
  }
  return new LoggerImportError('time_backwards', `Row ${line}, column "${column}": ${quoteCell(cell)} is earlier than row ${lastTLine}`, { row: line, column })
}

/** Skipped rows: all counted, the first MAX_LISTED_WARNINGS listed, the import refused past the limits. */
export class SkippedRows {
  count = 0
  readonly warnings: LoggerImportWarning[] = []
  private readonly maxBadRows: number
  private readonly maxBadRowShare: number
  /** a decimal point mapping: a refusal hints at a decimal comma when the cells look like one */
  private readonly decimalPoint: boolean

  constructor(opts: { maxBadRows: number; maxBadRowShare: number; decimalPoint: boolean }) {
    this.maxBadRows = opts.maxBadRows
    this.maxBadRowShare = opts.maxBadRowShare
    this.decimalPoint = opts.decimalPoint
  }

  /** `rows`: data rows read so far, this one included. */
  row(line: number, column: string | undefined, message: string, rows: number): void {
    this.count++
    if (this.warnings.length < MAX_LISTED_WARNINGS) {
      this.warnings.push(column === undefined ? { row: line, message } : { row: line, column, message })
    }
    if (this.count > this.maxBadRows) this.throwTooMany(this.maxBadRows, rows)
  }

  /** A skipped row named by its first unreadable cell; true, for the caller to pass on. */
  cell(line: number, column: string | undefined, message: string, rows: number): true {
    this.row(line, column, `Row ${line}, column "${column}": ${message}`, rows)
    return true
  }

  /** At the end of the file: the share of skipped rows against the data rows. */
  checkShare(rows: number): void {
    const allowed = Math.min(this.maxBadRows, Math.max(1, Math.floor(this.maxBadRowShare * rows)))
    if (this.count > allowed) this.throwTooMany(allowed, rows)
  }

  private throwTooMany(allowed: number, rows: number): never {
    const first = this.warnings[0]
    const hint = first && this.decimalPoint && /"-?\d+,\d+"/.test(first.message) ? ' (the file may use a decimal comma)' : ''
    throw new LoggerImportError(
      'too_many_bad_rows',
      `Too many unreadable rows: ${this.count} of ${rows} (at most ${allowed} may be skipped)${hint}. First: ${first?.message ?? ''}`,
      first ? { row: first.row, column: first.column } : {},
    )
  }
}
