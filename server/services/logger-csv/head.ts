// The lines before the data rows: metadata lines an export writes first (the preamble, kept
// with the session), the channel names and an optional units row. Read a line at a time from
// the checked bytes; what follows the last of them is handed back untouched for the row reader.

import Papa from 'papaparse'
import { detectDelimiter, type LoggerMapping } from '../../../shared/domain/logger-mapping'
import { emptyFile, noHeader } from './errors'
import { CR, LF } from './bytes'
import { isBlank, type HeaderInfo } from './rows'

/** Preamble lines kept with a session, and the characters kept of each. */
export const MAX_KEPT_PREAMBLE_LINES = 50
export const MAX_KEPT_PREAMBLE_CHARS = 200

export interface HeadResult extends HeaderInfo {
  delimiter: string
  /** the header line's own line break: '\n', '\r\n' or '\r' */
  newline: string
  preamble: string[]
}

export class HeadStage {
  private readonly mapping: LoggerMapping
  private pending: Buffer | null = null
  /** lines read so far */
  line = 0
  private preamble: string[] = []
  private head: Omit<HeadResult, 'unitCells'> | null = null
  result: HeadResult | null = null

  constructor(mapping: LoggerMapping) {
    this.mapping = mapping
  }

  /** Takes bytes until the data rows begin; then answers the bytes after the last head line. */
  take(buf: Buffer): Buffer | null {
    let data = this.pending ? Buffer.concat([this.pending, buf]) : buf
    this.pending = null
    let from = 0
    for (;;) {
      const lf = data.indexOf(LF, from)
      const cr = data.indexOf(CR, from)
      if (lf < 0 && cr < 0) break
      let end: number
      let next: number
      if (cr >= 0 && (lf < 0 || cr < lf)) {
        if (cr === data.length - 1) break // wait: CR may be the first half of CR LF
        end = cr
        next = data[cr + 1] === LF ? cr + 2 : cr + 1
      } else {
        end = lf
        next = lf + 1
      }
      this.line++
      this.takeLine(data.toString('utf8', from, end), data.toString('latin1', end, next))
      from = next
      if (this.result) return data.subarray(from)
    }
    if (from < data.length) this.pending = Buffer.from(data.subarray(from))
    return null
  }

  /** At the end of the file with the head unfinished: a last line without a line break, or a refusal. */
  finish(): HeadResult {
    if (this.result) return this.result
    const last = this.pending ? this.pending.toString('utf8').replace(/[\r\n]+$/, '') : null
    this.pending = null
    if (last !== null) {
      this.line++
      this.takeLine(last, '\n')
    }
    if (this.result) return this.result
    if (this.head) return (this.result = { ...this.head, unitCells: null }) // the units row never came: no data rows either
    const layout = this.mapping.layout
    if (layout) throw noHeader(layout.headerLine, this.line)
    throw emptyFile()
  }

  private takeLine(line: string, newline: string): void {
    if (this.head) {
      // the units row
      this.result = { ...this.head, unitCells: this.split(line, this.head.delimiter).map((c) => c.trim()) }
      return
    }
    const layout = this.mapping.layout
    const isHeader = layout ? this.line === layout.headerLine : !isBlank(line)
    if (!isHeader) {
      if (!isBlank(line) && this.preamble.length < MAX_KEPT_PREAMBLE_LINES) this.preamble.push(line.replace(/^\uFEFF/, '').trim().slice(0, MAX_KEPT_PREAMBLE_CHARS))
      return
    }
    const delimiter = this.mapping.delimiter ?? detectDelimiter(line)
    const header = this.split(line, delimiter).map((c) => c.replace(/^\uFEFF/, '').trim())
    const head = { header, headerLine: this.line, delimiter, newline, preamble: this.preamble }
    if (layout?.unitsRow) this.head = head
    else this.result = { ...head, unitCells: null }
  }

  private split(line: string, delimiter: string): string[] {
    return line.indexOf('"') >= 0 ? (Papa.parse<string[]>(line, { delimiter, header: false }).data[0] ?? []) : line.split(delimiter)
  }
}
