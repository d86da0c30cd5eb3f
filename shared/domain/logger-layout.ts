// Export layouts of logger files: metadata lines before the channel names (the preamble), an
// optional units row under the names, and the units written there. Shared by the browser
// preview (detection) and the server import (reading units). Pure: no I/O, no clock.

import { LOGGER_MAX_PREAMBLE_LINES, parseClock, type LoggerUnits } from './logger-mapping'

/** Channels whose unit a units row can set. */
export type UnitChannel = 'time' | 'speed' | 'oilTemp' | 'waterTemp' | 'oilPressure'

const UNIT_WORDS: Record<UnitChannel, Record<string, string>> = {
  time: { s: 'seconds', sec: 'seconds', secs: 'seconds', second: 'seconds', seconds: 'seconds', ms: 'ms', msec: 'ms', millisecond: 'ms', milliseconds: 'ms', 'hh:mm:ss': 'clock', 'hh:mm:ss.sss': 'clock', clock: 'clock' },
  speed: { 'km/h': 'kmh', kmh: 'kmh', kph: 'kmh', 'km h': 'kmh', mph: 'mph', 'mi/h': 'mph' },
  oilTemp: { c: 'C', '°c': 'C', degc: 'C', 'deg c': 'C', f: 'F', '°f': 'F', degf: 'F', 'deg f': 'F' },
  waterTemp: { c: 'C', '°c': 'C', degc: 'C', 'deg c': 'C', f: 'F', '°f': 'F', degf: 'F', 'deg f': 'F' },
  oilPressure: { bar: 'bar', kpa: 'kPa', psi: 'psi' },
}

/** What a units row may say for a channel, for the message naming an unknown unit. */
export const UNIT_CHOICES: Record<UnitChannel, string> = {
  time: 's, ms or hh:mm:ss',
  speed: 'km/h or mph',
  oilTemp: '°C or °F',
  waterTemp: '°C or °F',
  oilPressure: 'bar, kPa or psi',
}

/**
 * The unit a units-row cell names for a channel: brackets and blanks around are dropped,
 * case is ignored. '' for a blank cell (keep the mapping's unit), null for a unit not read.
 */
export function unitFromCell(channel: UnitChannel, cell: string): string | null {
  const s = cell.replace(/^\uFEFF/, '').trim().replace(/^[[(]\s*|\s*[\])]$/g, '').trim().toLowerCase()
  if (s === '') return ''
  return UNIT_WORDS[channel][s] ?? null
}

/** The mapping's units with those the units row names for the mapped channels; the first unknown unit is reported. */
export function unitsFromRow(
  base: LoggerUnits,
  cells: Partial<Record<UnitChannel, string>>,
): { units: LoggerUnits; unknown: { channel: UnitChannel; cell: string } | null } {
  const units = { ...base }
  for (const ch of ['time', 'speed', 'oilTemp', 'waterTemp', 'oilPressure'] as const) {
    const cell = cells[ch]
    if (cell === undefined) continue
    const u = unitFromCell(ch, cell)
    if (u === null) return { units, unknown: { channel: ch, cell } }
    if (u === '') continue
    if (ch === 'time') units.time = u as LoggerUnits['time']
    else if (ch === 'speed') units.speed = u as LoggerUnits['speed']
    else if (ch === 'oilPressure') units.pressure = u as LoggerUnits['pressure']
    // one temperature unit serves both temperature channels; the oil channel's wins
    else if (ch === 'oilTemp' || cells.oilTemp === undefined || unitFromCell('oilTemp', cells.oilTemp) === '') units.temperature = u as LoggerUnits['temperature']
  }
  return { units, unknown: null }
}

function splitLine(line: string, delimiter: string): string[] {
  // quoted names: a cell in double quotes, "" for a quote inside
  if (line.indexOf('"') < 0) return line.split(delimiter)
  const out: string[] = []
  let cell = ''
  let quoted = false
  for (let i = 0; i < line.length; i++) {
    const c = line[i]!
    if (quoted) {
      if (c === '"' && line[i + 1] === '"') {
        cell += '"'
        i++
      } else if (c === '"') quoted = false
      else cell += c
    } else if (c === '"' && cell.trim() === '') {
      quoted = true
      cell = ''
    } else if (line.startsWith(delimiter, i)) {
      out.push(cell)
      cell = ''
    } else cell += c
  }
  out.push(cell)
  return out
}

const isNumberCell = (c: string) => {
  const s = c.trim()
  return s !== '' && (Number.isFinite(Number(s.replace(',', '.'))) || parseClock(s) !== null)
}
// Unit words seen in common practice on units rows, beside those read for a channel.
const OTHER_UNITS = new Set(['rpm', '1/min', '%', 'g', 'deg', '°', 'v', 'mv', 'a', 'ma', 'mm', 'm', 'km', 'nm', 'hz', 'lambda', 'kg', 'l', 'l/h', 'm/s', 'm/s2', 'm/s^2', 'rad', 'rad/s', 'deg/s', 'n', 'kn', 'kw', 'hp', 'mbar', 'hpa', 'ohm', 'gear', '-', '#', 'k', 'sec', 'min', 'h'])
const looksLikeUnit = (c: string) => {
  const s = c.trim().toLowerCase()
  if (s === '' || /^[[(].*[\])]$/.test(s) || s.includes('°') || OTHER_UNITS.has(s)) return true
  return (['time', 'speed', 'oilTemp', 'oilPressure'] as const).some((ch) => unitFromCell(ch, s))
}
const unitShare = (cells: string[]) => cells.filter(looksLikeUnit).length / Math.max(1, cells.length)

const numericShare = (cells: string[]) => cells.filter(isNumberCell).length / Math.max(1, cells.length)

/** Rows under a candidate line of names that must all read as data. */
const DATA_ROWS_SEEN = 3

export interface DetectedLayout {
  /** file line of the channel names, 1 = first line */
  headerLine: number
  unitsRow: boolean
  preamble: string[]
  header: string[]
  units: string[] | null
  /** file line of the first data row */
  firstDataLine: number
}

/**
 * Finds the channel names in the first lines of a file: the first line, after at most
 * LOGGER_MAX_PREAMBLE_LINES, with as many cells as the data rows below it, mostly not numbers,
 * followed (after an optional units row, also mostly not numbers) by rows that are mostly
 * numbers. A units row is taken as one only when most of its cells read as units. Null when
 * no such line is found.
 */
export function detectLayout(lines: string[], delimiter: string): DetectedLayout | null {
  const cells = lines.map((l) => splitLine(l.replace(/\r$/, ''), delimiter))
  const isRow = (k: number, width: number) => cells[k] !== undefined && cells[k]!.length === width && numericShare(cells[k]!) >= 0.5
  // data: the next rows (up to DATA_ROWS_SEEN, as many as the lines read hold) all of that width and mostly numbers,
  // so that a metadata line such as "Time: 14:02:10" under "Date: ..." is not taken for a data row
  const isData = (from: number, width: number) => {
    let seen = 0
    for (let k = from; k < Math.min(cells.length, from + DATA_ROWS_SEEN); k++) {
      if (lines[k]!.trim() === '' && k === cells.length - 1) break // the empty string after a final line break
      if (!isRow(k, width)) return false
      seen++
    }
    return seen > 0
  }
  for (let h = 0; h < Math.min(lines.length, LOGGER_MAX_PREAMBLE_LINES + 1); h++) {
    const width = cells[h]!.length
    if (width < 2 || numericShare(cells[h]!) > 0.2) continue
    if (isData(h + 1, width)) return layoutAt(lines, cells, h, false)
    const next = cells[h + 1]
    if (next && next.length === width && numericShare(next) <= 0.2 && unitShare(next) >= 0.6 && isData(h + 2, width)) return layoutAt(lines, cells, h, true)
  }
  return null
}

function layoutAt(lines: string[], cells: string[][], h: number, unitsRow: boolean): DetectedLayout {
  return {
    headerLine: h + 1,
    unitsRow,
    preamble: lines.slice(0, h).map((l) => l.replace(/\r$/, '')).filter((l) => l.trim() !== ''),
    header: cells[h]!.map((c) => c.replace(/^\uFEFF/, '').trim()),
    units: unitsRow ? cells[h + 1]!.map((c) => c.trim()) : null,
    firstDataLine: h + (unitsRow ? 3 : 2),
  }
}

export interface PreambleEntry { key: string; value: string }

/** Metadata lines as key and value: split at the first delimiter, ':' or '='; a line without one is a value alone. */
export function preambleEntries(lines: string[], delimiter: string): PreambleEntry[] {
  return lines.map((raw) => {
    const line = raw.replace(/^\uFEFF/, '').trim()
    const cells = splitLine(line, delimiter).map((c) => c.trim()).filter((c) => c !== '')
    if (cells.length >= 2) return { key: cells[0]!.replace(/[:=]$/, ''), value: cells.slice(1).join(' ') }
    const m = /^([^:=]{1,60}?)\s*[:=]\s*(.*)$/.exec(line)
    return m ? { key: m[1]!, value: m[2]! } : { key: '', value: line }
  })
}

/**
 * The logger's own start of recording, when the preamble says it: an ISO date-time, or a
 * date (YYYY-MM-DD, DD.MM.YYYY or DD/MM/YYYY) with a time of day under a "date" and a "time"
 * key or in one value. Answered as an ISO string in UTC (a logger writes local time without
 * a zone: the engineer confirms it), or null.
 */
export function preambleStart(entries: PreambleEntry[]): string | null {
  let date: string | null = null
  let time: string | null = null
  for (const { key, value } of entries) {
    const k = key.toLowerCase()
    const d = /(\d{4})-(\d{2})-(\d{2})|(\d{2})[./](\d{2})[./](\d{4})/.exec(value)
    const t = /(\d{1,2}):(\d{2})(?::(\d{2}))?/.exec(value.slice(d ? d.index + d[0].length : 0))
    if (d && !date && /date|start|recorded|time/.test(k)) date = d[1] ? `${d[1]}-${d[2]}-${d[3]}` : `${d[6]}-${d[5]}-${d[4]}`
    if (t && !time && /time|start|recorded/.test(k)) time = `${t[1]!.padStart(2, '0')}:${t[2]}:${t[3] ?? '00'}`
  }
  if (!date) return null
  const iso = `${date}T${time ?? '00:00:00'}Z`
  return Number.isFinite(Date.parse(iso)) ? new Date(iso).toISOString() : null
}
