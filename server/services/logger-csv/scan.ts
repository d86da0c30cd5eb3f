// The data rows read straight from the checked bytes: no text is decoded, no cell becomes a
// string. A row of plain cells is read here in one pass (unanalysed cells are stepped over,
// analysed ones parsed as numbers into the block); any other row (a quoted cell, a blank or
// odd cell, the wrong number of fields) is decoded and handed to RowConverter.takeRow as
// cells, split exactly as papaparse splits it, so both paths give the same samples.
// Nothing is changed before a row is known to be plain, so handing it on is always safe.

import Papa from 'papaparse'
import { parseClock } from '../../../shared/domain/logger-mapping'
import { TRACE_MAX_RPM, TRACE_MAX_SPEED } from '../../../shared/domain/trace'
import { CR, LF } from './bytes'
import { unclosedQuote } from './errors'
import { BLOCK_ROWS, type RowConverter } from './rows'

const QUOTE = 34
const MINUS = 45
/** A row still open after this many bytes (an unclosed quote) is refused. */
export const MAX_ROW_BYTES = 1 << 20

// exact powers of ten for mantissas of up to 15 digits, as parseDecimal uses
const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15]

export class RowScanner {
  private readonly conv: RowConverter
  private readonly delimiter: string
  private readonly delim: number
  private readonly nl: number
  private readonly newline: string
  private readonly crlf: boolean
  /** per column: -1 not read, 0 the time, c + 1 the c-th value column */
  private readonly slot: Int32Array
  private rest: Buffer | null = null

  constructor(conv: RowConverter, delimiter: string, newline: string) {
    this.conv = conv
    this.delimiter = delimiter
    this.delim = delimiter.charCodeAt(0)
    this.newline = newline
    this.nl = newline === '\r' ? CR : LF
    this.crlf = newline === '\r\n'
    this.slot = new Int32Array(conv.ncol).fill(-1)
    conv.valueIndex.forEach((col, c) => (this.slot[col] = c + 1))
    this.slot[conv.iTime] = 0
  }

  /**
   * Rows end at line breaks; the part after a chunk's last one waits for the next chunk. Only
   * that part and the start of the next chunk up to its first line break are ever copied.
   */
  take(buf: Buffer): void {
    let data = buf
    if (this.rest) {
      const nl = buf.indexOf(this.nl)
      if (nl < 0) {
        data = Buffer.concat([this.rest, buf])
      } else {
        const joined = Buffer.concat([this.rest, buf.subarray(0, nl + 1)])
        const done = this.scan(joined, 0, joined.length)
        if (done === joined.length) data = buf.subarray(nl + 1)
        else data = Buffer.concat([joined.subarray(done), buf.subarray(nl + 1)]) // a quoted cell runs on
      }
      this.rest = null
    }
    const to = data.lastIndexOf(this.nl) + 1
    const done = to > 0 ? this.scan(data, 0, to) : 0
    if (done < data.length) {
      if (data.length - done > MAX_ROW_BYTES) throw unclosedQuote(this.conv.line + 1)
      this.rest = Buffer.from(data.subarray(done))
    }
  }

  /** At the end of the file: the last row without a line break, then the last block. */
  finish(): void {
    const rest = this.rest
    this.rest = null
    if (rest && rest.length > 0) {
      const data = Buffer.concat([rest, Buffer.from(this.newline, 'latin1')])
      const done = this.scan(data, 0, data.length)
      // an unclosed quote runs to the end of the file, as papaparse reads it
      if (done < data.length) this.conv.take(this.cells(data, done, data.length - this.newline.length))
    }
    this.conv.flush()
  }

  /**
   * The hot loop: rows in data[from, to), `to` just past a line break. Answers where it
   * stopped: `to`, or the start of a row whose quoted cell runs past `to`.
   */
  private scan(data: Buffer, from: number, to: number): number {
    const conv = this.conv
    const D = this.delim
    const NL = this.nl
    const slot = this.slot
    const ncol = conv.ncol
    const cols = conv.valueColumns
    const rpmCol = conv.block.rpm
    const speedCol = conv.block.speedKmh
    const dec = conv.decimalCode
    const clock = conv.clock
    const ms = conv.ms
    let p = from
    rows: while (p < to) {
      const rowStart = p
      const k = conv.k
      let t = NaN
      let clockRaw = 0
      let c = 0
      let b = data[p]!
      for (;;) {
        const s = slot[c]!
        if (b === QUOTE) break
        if (s < 0) {
          while (b !== D && b !== NL) b = data[++p]!
        } else if (s === 0 && clock) {
          const start = p
          while (b !== D && b !== NL) b = data[++p]!
          const end = b === NL && data[p - 1] === CR ? p - 1 : p
          const raw = parseClock(data.toString('latin1', start, end))
          if (raw === null) break
          clockRaw = raw
        } else {
          // [-]digits[.digits], at most 15 digits: what parseDecimal reads on its fast path
          const neg = b === MINUS
          if (neg) b = data[++p]!
          const start = p
          let m = 0
          let d = b - 48
          while ((d >>> 0) <= 9) {
            m = m * 10 + d
            d = data[++p]! - 48
          }
          let digits = p - start
          let frac = 0
          if (d + 48 === dec) {
            const fracStart = ++p
            d = data[p]! - 48
            while ((d >>> 0) <= 9) {
              m = m * 10 + d
              d = data[++p]! - 48
            }
            frac = p - fracStart
            digits += frac
          }
          b = d + 48
          if (digits === 0 || digits > 15) break
          if (b !== D && b !== NL && !(b === CR && data[p + 1] === NL)) break
          let v = frac === 0 ? m : m / POW10[frac]!
          if (neg) v = -v
          if (s === 0) t = ms ? v / 1000 : v
          else cols[s - 1]![k] = v
          if (b === CR) b = data[++p]!
        }
        c++
        if (b === D) {
          if (c === ncol) break
          b = data[++p]!
          continue
        }
        // the line break
        if (c !== ncol) break
        p++
        // a plain row: every analysed cell read
        const line = ++conv.line
        conv.rows++
        if (clock) t = conv.clockSeconds(clockRaw)
        const rpm = rpmCol[k]!
        const speed = speedCol[k]!
        if (rpm > TRACE_MAX_RPM || speed < 0 || speed > TRACE_MAX_SPEED || rpm < 0) {
          const cells = this.cells(data, rowStart, p - 1)[0]!
          if (conv.rowProblem(cells, line)) continue rows
          conv.accept(t, line, cells[conv.iTime]!)
          continue rows
        }
        if (conv.accepted > 0 && t <= conv.lastT) {
          conv.accept(t, line, this.cells(data, rowStart, p - 1)[0]![conv.iTime]!) // throws the time order error
        }
        conv.block.t[k] = t
        conv.k = k + 1
        conv.accepted++
        conv.lastT = t
        conv.lastTLine = line
        if (conv.k === BLOCK_ROWS) conv.flush()
        continue rows
      }
      // not a plain row: find its end (quotes respected) and hand its cells on
      const end = this.rowEnd(data, rowStart, to)
      if (end < 0) return rowStart
      conv.take(this.cells(data, rowStart, end - 1))
      p = end
    }
    return to
  }

  /** Index just past the line break that ends the row starting at p, or -1 when a quoted cell runs past `to`. */
  private rowEnd(data: Buffer, p: number, to: number): number {
    const D = this.delim
    const NL = this.nl
    let fieldStart = true
    while (p < to) {
      const b = data[p]!
      if (fieldStart && b === QUOTE) {
        p++
        for (;;) {
          if (p >= to) return -1
          if (data[p] === QUOTE) {
            if (data[p + 1] === QUOTE && p + 1 < to) p += 2
            else {
              p++
              break
            }
          } else p++
        }
        fieldStart = false
        continue
      }
      if (b === NL) return p + 1
      fieldStart = b === D
      p++
    }
    return -1
  }

  /** The row data[from, end) (its line break excluded) as papaparse's cells. */
  private cells(data: Buffer, from: number, end: number): string[][] {
    let text = data.toString('utf8', from, end)
    if (this.crlf && text.charCodeAt(text.length - 1) === CR) text = text.slice(0, -1)
    if (text.indexOf('"') < 0) return [text.split(this.delimiter)]
    const rows = Papa.parse<string[]>(text, { delimiter: this.delimiter, newline: this.newline as '\n', header: false }).data
    return rows.length > 0 ? rows : [['']]
  }
}
