// The byte stage of a logger import: every chunk is counted against the size cap, hashed
// (SHA-256 of the file as sent), checked for NUL bytes, line length and UTF-8, and handed on
// as bytes that end on a character boundary (a leading BOM removed).

import { isUtf8 } from 'node:buffer'
import { createHash } from 'node:crypto'
import { fileTooLarge, invalidUtf8, lineTooLong, notText } from './errors'

/** How far into the file NUL bytes or bad UTF-8 mean "not a text file". */
export const TEXT_SNIFF_BYTES = 8192

export const LF = 10
export const CR = 13

export class LoggerBytes {
  private readonly maxBytes: number
  private readonly maxLineLength: number
  private readonly hash = createHash('sha256')
  bytes = 0

  // UTF-8 bytes of a character split across chunks, carried to the next chunk
  private carry: Buffer | null = null
  private decodedAny = false

  // byte-level line scan, for the line length limit
  private newlineByte = LF
  private newlineKnown = false
  private lineLen = 0 // bytes of the unfinished line carried from earlier chunks
  private lastByteCR = false

  constructor(maxBytes: number, maxLineLength: number) {
    this.maxBytes = maxBytes
    this.maxLineLength = maxLineLength
  }

  /**
   * Checks one chunk and answers its bytes, whole characters only (without a leading BOM). `line`: lines handed on
   * before this chunk, to name a row; `headerRead`: bad UTF-8 past the header is named by row.
   */
  take(buf: Buffer, line: number, headerRead: boolean): Buffer {
    const before = this.bytes
    if (before + buf.length > this.maxBytes) throw fileTooLarge(this.maxBytes)
    this.bytes += buf.length
    this.hash.update(buf)
    if (before < TEXT_SNIFF_BYTES) {
      const head = buf.subarray(0, TEXT_SNIFF_BYTES - before)
      if (head.indexOf(0) >= 0) throw notText('it contains NUL bytes')
    }
    if (!this.newlineKnown) this.detectNewline(buf)
    this.scanLines(buf, line)
    return this.decode(buf, before, line, headerRead)
  }

  /** At the end of the file: refuses one that ends inside a character; answers the SHA-256. */
  finish(line: number, headerRead: boolean): string {
    if (this.carry) this.throwBadUtf8(this.bytes, line, headerRead)
    return this.hash.digest('hex')
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

  // isUtf8 (simdutf) is several times faster than a fatal TextDecoder here.
  // A character split across chunks is carried; it sits on the unfinished line, so the
  // chunk's first line is still the carry's line.
  private decode(chunk: Buffer, byteOffset: number, line: number, headerRead: boolean): Buffer {
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
    if (!isUtf8(buf)) this.throwBadUtf8(byteOffset, line + this.linesBeforeBadUtf8(buf), headerRead)
    if (!this.decodedAny && buf.length > 0) {
      this.decodedAny = true
      if (buf[0] === 0xef && buf[1] === 0xbb && buf[2] === 0xbf) buf = buf.subarray(3)
    }
    return buf
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

  private throwBadUtf8(byteOffset: number, line: number, headerRead: boolean): never {
    if (byteOffset < TEXT_SNIFF_BYTES || !headerRead) throw notText('it is not valid UTF-8')
    throw invalidUtf8(line + 1)
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
      throw lineTooLong(lineAtChunk + this.breaksBefore(buf, start) + 1, max)
    }
    const last = buf.lastIndexOf(nl)
    this.lineLen = last >= 0 && last >= start ? n - last - 1 : n - start
    this.lastByteCR = buf[n - 1] === CR
    // a CR may still be followed by LF in the next chunk
    if (this.lineLen - (this.lastByteCR && nl === LF ? 1 : 0) > max) {
      throw lineTooLong(lineAtChunk + this.breaksBefore(buf, n) + 1, max)
    }
  }

  /** Only on failure: line breaks in buf before index `end`. */
  private breaksBefore(buf: Buffer, end: number): number {
    let count = 0
    for (let at = buf.indexOf(this.newlineByte); at >= 0 && at < end; at = buf.indexOf(this.newlineByte, at + 1)) count++
    return count
  }
}
