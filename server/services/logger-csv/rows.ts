// Row conversion for a logger import: the header's columns resolved for the mapped channels,
// and each parsed row's analysed cells read straight into the typed columns of a TraceBlock
// (units converted, clock times counted from the first row), a block per parsed chunk.

import { LOGGER_CHANNELS, parseClock, parseDecimal, type LoggerChannel, type LoggerMapping } from '../../../shared/domain/logger-mapping'
import { toBar, toCelsius, toKmh } from '../../../shared/domain/units'
import { TRACE_MAX_RPM, TRACE_MAX_SPEED, createTraceBlock, type TraceAnalyzer, type TraceBlock } from '../../../shared/domain/trace'
import { duplicateColumn, missingColumn, quoteCell, timeOrderError, type SkippedRows } from './errors'
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

/**
 * Throttle and gear columns must exist when mapped, but they feed no figure yet, so their
 * cells are not read: a glitch there does not cost a good rpm sample.
 */
export class RowConverter {
  private readonly mapping: LoggerMapping
  private readonly header: string[]
  private readonly analyzer: TraceAnalyzer
  private readonly skipped: SkippedRows
  private readonly ncol: number
  private readonly iTime: number
  private readonly iRpm: number
  private readonly iSpeed: number
  private readonly iOilTemp: number
  private readonly iOilPressure: number
  private readonly iWaterTemp: number
  private readonly decimalCode: number
  private readonly clock: boolean
  // Mapped numeric channels other than time: column index and the block column it fills.
  private valueIndex = new Int32Array(0)
  private valueColumns: Float64Array[] = []

  // one block of converted samples per parsed chunk, reused; unmapped channels stay NaN
  private block: TraceBlock = createTraceBlock(0)

  /** file line of the last row taken */
  line: number
  /** data rows read, skipped ones included, blank lines not */
  rows = 0
  private accepted = 0
  private lastT = NaN // read only once a row is accepted
  private lastTLine = 0
  private clockStarted = false
  private clockT0 = 0
  private clockDayOffset = 0
  private lastClockRaw = 0

  /** `headerLine`: the header's file line; throws when a mapped column is missing or named twice. */
  constructor(mapping: LoggerMapping, header: string[], headerLine: number, analyzer: TraceAnalyzer, skipped: SkippedRows) {
    this.mapping = mapping
    this.header = header
    this.analyzer = analyzer
    this.skipped = skipped
    this.ncol = header.length
    this.decimalCode = mapping.decimal === ',' ? 44 : 46
    this.clock = mapping.units.time === 'clock'
    const idx = resolveColumns(header, mapping.columns)
    this.iTime = idx.time
    this.iRpm = idx.rpm
    this.iSpeed = idx.speed
    this.iOilTemp = idx.oilTemp
    this.iOilPressure = idx.oilPressure
    this.iWaterTemp = idx.waterTemp
    this.line = headerLine
    this.growBlock(4096) // rows of a 64 KiB chunk and then some: no regrowth in the usual case
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
  take(rows: string[][]): void {
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
      const line = ++this.line
      if (row.length !== ncol) {
        if (row.length === 1 && isBlank(row[0]!)) continue
        this.rows++
        this.skipped.row(line, undefined, `Row ${line}: ${row.length} field${row.length === 1 ? '' : 's'}, the header has ${ncol}`, this.rows)
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
      if (accepted > 0 && t <= lastT) throw timeOrderError(this.header[iTime]!, row[iTime]!, t, line, lastT, lastTLine)
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
    return this.skipped.cell(line, this.header[col], message, this.rows)
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
