// Row conversion for a logger import: the header's columns resolved for the mapped channels
// (units from the mapping, or from the file's units row where the mapping says so), and each
// row's analysed cells read straight into the typed columns of a TraceBlock (units converted,
// clock times counted from the first row). The byte scanner (scan.ts) fills the same block
// for rows it reads itself and hands every other row here as cells (takeRow).

import { LOGGER_CHANNELS, parseClock, parseDecimal, type LoggerChannel, type LoggerMapping } from '../../../shared/domain/logger-mapping'
import { toBar, toCelsius, toKmh } from '../../../shared/domain/units'
import { TRACE_MAX_RPM, TRACE_MAX_SPEED, createTraceBlock, type TraceAnalyzer, type TraceBlock } from '../../../shared/domain/trace'
import { unitsFromRow, UNIT_CHOICES } from '../../../shared/domain/logger-layout'
import { duplicateColumn, missingColumn, quoteCell, timeOrderError, unknownUnit, type SkippedRows } from './errors'
import { CR } from './bytes'

/** Spaces, tabs and a CR only (a CR LF line split at its LF keeps its CR). */
export function isBlank(s: string): boolean {
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
    if (idx < 0) throw missingColumn(wanted, ch)
    if (again >= 0) throw duplicateColumn(wanted, ch)
    out[ch] = idx
  }
  return out
}


/** Rows per block handed to the analyzer. */
export const BLOCK_ROWS = 8192

export interface HeaderInfo {
  header: string[]
  /** file line of the channel names */
  headerLine: number
  /** the units row's cells, when the layout has one */
  unitCells: string[] | null
}

/**
 * Throttle and gear columns must exist when mapped, but they feed no figure yet, so their
 * cells are not read: a glitch there does not cost a good rpm sample.
 * Fields are public for the byte scanner, which keeps them in locals while it runs.
 */
export class RowConverter {
  readonly units: LoggerMapping['units']
  readonly header: string[]
  readonly analyzer: TraceAnalyzer
  readonly skipped: SkippedRows
  readonly ncol: number
  readonly iTime: number
  readonly iRpm: number
  readonly iSpeed: number
  readonly iOilTemp: number
  readonly iOilPressure: number
  readonly iWaterTemp: number
  readonly decimalCode: number
  readonly clock: boolean
  readonly ms: boolean
  // Mapped numeric channels other than time: column index and the block column it fills.
  readonly valueIndex: Int32Array
  readonly valueColumns: Float64Array[]

  // one block of converted samples, reused; unmapped channels stay NaN
  readonly block: TraceBlock = createTraceBlock(BLOCK_ROWS)
  /** samples in the block */
  k = 0

  /** file line of the last row taken */
  line: number
  /** data rows read, skipped ones included, blank lines not */
  rows = 0
  accepted = 0
  lastT = NaN // read only once a row is accepted
  lastTLine = 0
  private clockStarted = false
  private clockT0 = 0
  private clockDayOffset = 0
  private lastClockRaw = 0

  /** Throws when a mapped column is missing or named twice, or the units row names a unit not read. */
  constructor(mapping: LoggerMapping, head: HeaderInfo, analyzer: TraceAnalyzer, skipped: SkippedRows) {
    const { header, headerLine, unitCells } = head
    this.header = header
    this.analyzer = analyzer
    this.skipped = skipped
    this.ncol = header.length
    this.decimalCode = mapping.decimal === ',' ? 44 : 46
    const idx = resolveColumns(header, mapping.columns)
    this.iTime = idx.time
    this.iRpm = idx.rpm
    this.iSpeed = idx.speed
    this.iOilTemp = idx.oilTemp
    this.iOilPressure = idx.oilPressure
    this.iWaterTemp = idx.waterTemp
    this.units = mapping.units
    this.line = headerLine
    if (unitCells) {
      this.line++
      if (mapping.layout?.unitsFromRow) {
        const at = (i: number) => (i >= 0 ? unitCells[i] ?? '' : undefined)
        const read = unitsFromRow(mapping.units, { time: at(idx.time), speed: at(idx.speed), oilTemp: at(idx.oilTemp), waterTemp: at(idx.waterTemp), oilPressure: at(idx.oilPressure) })
        if (read.unknown) {
          const col = idx[read.unknown.channel]
          throw unknownUnit(this.line, header[col]!, read.unknown.cell, UNIT_CHOICES[read.unknown.channel])
        }
        this.units = read.units
      }
    }
    this.clock = this.units.time === 'clock'
    this.ms = this.units.time === 'ms'
    const b = this.block
    for (const col of [b.speedKmh, b.oilTempC, b.oilPressureBar, b.waterTempC]) col.fill(NaN)
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

  /** Rows split into cells (papaparse, or a row the byte scanner does not read itself). */
  take(rows: string[][]): void {
    for (let r = 0; r < rows.length; r++) this.takeRow(rows[r]!)
  }

  /** One row of cells: read into the block, skipped with a warning, or refused. */
  takeRow(row: string[]): void {
    const line = ++this.line
    if (row.length !== this.ncol) {
      if (row.length === 1 && isBlank(row[0]!)) return
      this.rows++
      this.skipped.row(line, undefined, `Row ${line}: ${row.length} field${row.length === 1 ? '' : 's'}, the header has ${this.ncol}`, this.rows)
      return
    }
    this.rows++
    const dec = this.decimalCode
    const k = this.k
    let t: number
    if (this.clock) {
      const raw = parseClock(row[this.iTime]!)
      t = raw === null ? NaN : this.clockSeconds(raw)
    } else {
      t = parseDecimal(row[this.iTime]!, dec)
      if (this.ms) t = t / 1000
    }
    let unreadable = t !== t
    const valueIndex = this.valueIndex
    for (let c = 0; c < valueIndex.length; c++) {
      const v = parseDecimal(row[valueIndex[c]!]!, dec)
      this.valueColumns[c]![k] = v
      if (v !== v) unreadable = true
    }
    const rpm = this.block.rpm[k]!
    const speed = this.block.speedKmh[k]!
    if (unreadable || rpm < 0 || rpm > TRACE_MAX_RPM || speed < 0 || speed > TRACE_MAX_SPEED) {
      if (this.rowProblem(row, line)) return
    }
    this.accept(t, line, row[this.iTime]!)
  }

  /** The sample at block index k is good: checks the time order and keeps it. */
  accept(t: number, line: number, timeCell: string): void {
    if (this.accepted > 0 && t <= this.lastT) throw timeOrderError(this.header[this.iTime]!, timeCell, t, line, this.lastT, this.lastTLine)
    this.block.t[this.k++] = t
    this.accepted++
    this.lastT = t
    this.lastTLine = line
    if (this.k === BLOCK_ROWS) this.flush()
  }

  /** Hands the block's samples to the analyzer (units converted) and starts a new block. */
  flush(): void {
    const count = this.k
    if (count === 0) return
    this.convertUnits(count)
    this.analyzer.pushBlock(this.block, count)
    this.k = 0
  }

  private convertUnits(count: number): void {
    const { speed, temperature, pressure } = this.units
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
  rowProblem(row: string[], line: number): boolean {
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
    return this.skipped.cell(line, this.header[col], message, this.rows)
  }

  /** Seconds from the first data row; a time of day that falls back > 12 h passed midnight. */
  clockSeconds(raw: number): number {
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
