// The reference row reader: papaparse's Parser splits the text into rows of cells, which
// RowConverter reads. Kept beside the byte scanner (scan.ts) so that tests can demand that
// both read every file to the same session.

import Papa from 'papaparse'
import type { Parser as PapaParser } from 'papaparse'
import type { RowConverter } from './rows'

export class PapaRows {
  private readonly conv: RowConverter
  private readonly parser: PapaParser
  private pending = ''

  constructor(conv: RowConverter, delimiter: string, newline: string) {
    this.conv = conv
    this.parser = new Papa.Parser({ delimiter, newline: newline as '\n', header: false, skipEmptyLines: false })
  }

  /** Bytes that end on a character boundary (the byte stage holds back a split character). */
  take(buf: Buffer): void {
    const text = buf.toString('utf8')
    const input = this.pending.length > 0 ? this.pending + text : text
    const res = this.parser.parse(input, 0, true)
    const cursor: number = res.meta.cursor
    this.pending = cursor >= input.length ? '' : input.slice(cursor)
    this.conv.take(res.data as string[][])
  }

  finish(): void {
    if (this.pending.length > 0) {
      const res = this.parser.parse(this.pending, 0, false)
      this.pending = ''
      this.conv.take(res.data as string[][])
    }
    this.conv.flush()
  }
}
