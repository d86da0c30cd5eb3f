// Mapping of a data-logger CSV (plain CSV, header row) onto Crankledger's trace channels.
// Shared by the browser preview page and the server import: pure, no I/O, no clock.

import { z } from 'zod'
import { line } from '../text'
import { toBar, toCelsius, toKmh } from './units'

export const LOGGER_CHANNELS = ['time', 'rpm', 'speed', 'oilTemp', 'oilPressure', 'waterTemp', 'throttle', 'gear'] as const
export type LoggerChannel = typeof LOGGER_CHANNELS[number]

/** Metadata lines an export may write before the channel names. */
export const LOGGER_MAX_PREAMBLE_LINES = 200

export const LOGGER_DELIMITERS = [',', ';', '\t', '|'] as const
export type LoggerDelimiter = typeof LOGGER_DELIMITERS[number]

export const LoggerMappingSchema = z.object({
  columns: z.object({
    // Header cells are compared trimmed, so a name of only blanks names no column.
    time: line().trim().min(1, 'name the time column'),
    rpm: line().trim().min(1, 'name the rpm column'),
    speed: line().optional(),
    oilTemp: line().optional(),
    oilPressure: line().optional(),
    waterTemp: line().optional(),
    throttle: line().optional(),
    gear: line().optional(),
  }),
  units: z.object({
    time: z.enum(['seconds', 'ms', 'clock']).default('seconds'),
    speed: z.enum(['kmh', 'mph']).default('kmh'),
    temperature: z.enum(['C', 'F']).default('C'),
    pressure: z.enum(['bar', 'kPa', 'psi']).default('bar'),
  }),
  delimiter: z.enum(LOGGER_DELIMITERS).optional(), // detected when absent
  decimal: z.enum(['.', ',']).default('.'),
  // Where the channel names sit in an export that writes metadata lines first. Absent: the
  // names are the first non-blank line and no units row follows.
  layout: z.object({
    /** file line of the channel names (1 = first line); the lines before it are the preamble */
    headerLine: z.number().int().min(1).max(LOGGER_MAX_PREAMBLE_LINES + 1),
    /** the line after the names holds a unit per column */
    unitsRow: z.boolean().default(false),
    /** units of the mapped channels are read from that row (a blank cell keeps the mapping's unit) */
    unitsFromRow: z.boolean().default(false),
  }).optional(),
})
export type LoggerMapping = z.infer<typeof LoggerMappingSchema>
export type LoggerUnits = LoggerMapping['units']

// Re-exported so a preview page converts exactly as the import does.
export { toBar, toCelsius, toKmh }

const CHAR_QUOTE = 34

/**
 * The delimiter that occurs most often outside quotes in one line (the header line).
 * Ties go to the earlier entry of LOGGER_DELIMITERS; no candidate at all gives ','.
 */
export function detectDelimiter(line: string): LoggerDelimiter {
  const counts = [0, 0, 0, 0]
  let quoted = false
  for (let i = 0; i < line.length; i++) {
    const c = line.charCodeAt(i)
    if (c === CHAR_QUOTE) quoted = !quoted
    else if (!quoted) {
      const k = c === 44 ? 0 : c === 59 ? 1 : c === 9 ? 2 : c === 124 ? 3 : -1
      if (k >= 0) counts[k]!++
    }
  }
  let best = 0
  for (let k = 1; k < counts.length; k++) if (counts[k]! > counts[best]!) best = k
  return LOGGER_DELIMITERS[best]!
}

function isDigitRun(s: string, from: number, to: number): boolean {
  if (from >= to) return false
  for (let i = from; i < to; i++) {
    const c = s.charCodeAt(i)
    if (c < 48 || c > 57) return false
  }
  return true
}

/** 'd+<sep>d+' with an optional sign, the whole (trimmed) cell. */
function looksDecimalWith(cell: string, sep: string): boolean {
  const s = cell.trim()
  const start = s.charCodeAt(0) === 45 || s.charCodeAt(0) === 43 ? 1 : 0
  const at = s.indexOf(sep, start)
  if (at < 0 || s.indexOf(sep, at + 1) >= 0) return false
  return isDigitRun(s, start, at) && isDigitRun(s, at + 1, s.length)
}

/**
 * Decimal mark used by the sample rows. With ',' as delimiter the decimal mark
 * cannot be a comma. Otherwise ',' wins only when more cells look like "12,5"
 * than like "12.5" (a cell "1,234" is read as a decimal comma, not as thousands).
 */
export function detectDecimal(sampleRows: string[][], delimiter: string): '.' | ',' {
  if (delimiter === ',') return '.'
  let comma = 0
  let point = 0
  for (const row of sampleRows) {
    for (const cell of row) {
      if (looksDecimalWith(cell, ',')) comma++
      else if (looksDecimalWith(cell, '.')) point++
    }
  }
  return comma > point ? ',' : '.'
}

/** Lower case, BOM and units in brackets removed, punctuation to single spaces. */
export function normaliseHeaderCell(cell: string): string {
  return cell
    .replace(/^\uFEFF/, '')
    .toLowerCase()
    .replace(/\[[^\]]*\]|\([^)]*\)|\{[^}]*\}/g, ' ')
    .replace(/[^a-z0-9%]+/g, ' ')
    .trim()
}

// Header names seen in common practice, compared after normaliseHeaderCell.
const EXACT_NAMES: Record<LoggerChannel, string[]> = {
  time: ['time', 't', 'time s', 'timestamp', 'elapsed', 'elapsed time', 'session time', 'log time', 'clock', 'seconds', 'secs'],
  rpm: ['rpm', 'engine speed', 'engine rpm', 'eng rpm', 'eng speed', 'revs', 'engine revs', 'n engine', 'n eng', 'crank speed'],
  speed: ['speed', 'vehicle speed', 'car speed', 'ground speed', 'gps speed', 'road speed', 'velocity', 'v', 'kmh', 'km h', 'mph'],
  oilTemp: ['oil temp', 'oil temperature', 'engine oil temp', 'engine oil temperature', 't oil', 'oil t', 'toil'],
  oilPressure: ['oil pressure', 'oil press', 'oil pres', 'engine oil pressure', 'p oil', 'oil p', 'poil'],
  waterTemp: ['water temp', 'water temperature', 'coolant temp', 'coolant temperature', 'engine temp', 'ect', 't water', 'water t', 'twater', 'coolant'],
  throttle: ['throttle', 'throttle position', 'throttle pos', 'throttle %', 'tps', 'pedal', 'pedal position', 'accelerator', 'aps'],
  gear: ['gear', 'gear position', 'current gear', 'gear pos', 'ngear'],
}

function hasWord(words: string[], ...any: string[]): boolean {
  return words.some((w) => any.includes(w))
}

// Looser rules for names like "Engine Oil Temperature Sensor 1"; only used when no exact name matched.
function fuzzyChannel(words: string[]): LoggerChannel | null {
  const oil = hasWord(words, 'oil')
  const temp = hasWord(words, 'temp', 'temperature', 'tmp')
  const press = hasWord(words, 'press', 'pressure', 'pres')
  if (oil && temp) return 'oilTemp'
  if (oil && press) return 'oilPressure'
  if (hasWord(words, 'water', 'coolant') && temp) return 'waterTemp'
  if (hasWord(words, 'rpm', 'revs')) return 'rpm'
  if (hasWord(words, 'engine') && hasWord(words, 'speed')) return 'rpm'
  if (hasWord(words, 'throttle', 'tps')) return 'throttle'
  if (hasWord(words, 'gear')) return 'gear'
  if (hasWord(words, 'speed', 'velocity')) return 'speed'
  if (hasWord(words, 'time', 'timestamp', 'elapsed')) return 'time'
  return null
}

/** A proposed column for each channel, by common header names; every header cell is used at most once. */
export function guessMapping(header: string[]): Partial<LoggerMapping['columns']> {
  const out: Partial<Record<LoggerChannel, string>> = {}
  const used = new Set<number>()
  const norm = header.map(normaliseHeaderCell)
  for (const ch of LOGGER_CHANNELS) {
    const names = EXACT_NAMES[ch]
    const i = norm.findIndex((n, k) => !used.has(k) && names.includes(n))
    if (i >= 0) {
      out[ch] = header[i]!.replace(/^\uFEFF/, '').trim()
      used.add(i)
    }
  }
  norm.forEach((n, k) => {
    if (used.has(k)) return
    const ch = fuzzyChannel(n.split(' '))
    if (ch && out[ch] === undefined) {
      out[ch] = header[k]!.replace(/^\uFEFF/, '').trim()
      used.add(k)
    }
  })
  return out
}

/** Units suggested by unit text in the header ("Speed [mph]", "Oil T (F)", "Oil P psi"). */
export function guessUnits(header: string[]): Partial<LoggerUnits> {
  const out: Partial<LoggerUnits> = {}
  for (const raw of header) {
    const s = raw.toLowerCase()
    if (/\bmph\b/.test(s)) out.speed = 'mph'
    else if (/km\s*\/\s*h|\bkmh\b|\bkph\b/.test(s)) out.speed ??= 'kmh'
    if (/°\s*f\b|\bdeg\s*f\b|[[(]\s*f\s*[\])]/.test(s)) out.temperature = 'F'
    else if (/°\s*c\b|\bdeg\s*c\b|[[(]\s*c\s*[\])]/.test(s)) out.temperature ??= 'C'
    if (/\bpsi\b/.test(s)) out.pressure = 'psi'
    else if (/\bkpa\b/.test(s)) out.pressure = 'kPa'
    else if (/\bbar\b/.test(s)) out.pressure ??= 'bar'
  }
  return out
}

/**
 * Normalised header, for matching a saved mapping profile to a new file:
 * same cells in the same order, ignoring case, BOM and surrounding or repeated blanks.
 */
export function headerSignature(header: string[]): string {
  return header.map((c) => c.replace(/^\uFEFF/, '').trim().replace(/\s+/g, ' ').toLowerCase()).join('|')
}

// --- clock timestamps -------------------------------------------------------

function digitsAt(s: string, at: number, n: number): number {
  let v = 0
  for (let i = at; i < at + n; i++) {
    const c = s.charCodeAt(i) - 48
    if (!(c >= 0 && c <= 9)) return -1
    v = v * 10 + c
  }
  return v
}

/** Days since 1970-01-01 of a proleptic Gregorian date (days-from-civil algorithm). */
function daysFromCivil(y: number, m: number, d: number): number {
  const yy = m <= 2 ? y - 1 : y
  const era = Math.floor(yy / 400)
  const yoe = yy - era * 400
  const doy = Math.floor((153 * (m + (m > 2 ? -3 : 9)) + 2) / 5) + d - 1
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy
  return era * 146097 + doe - 719468
}

function daysInMonth(y: number, m: number): number {
  if (m === 2) return (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0 ? 29 : 28
  return m === 4 || m === 6 || m === 9 || m === 11 ? 30 : 31
}

/** hh:mm:ss[.f...] (or h:mm:ss) starting at `at`, ending at `end`; seconds of the day or -1. */
function timeOfDay(s: string, at: number, end: number): number {
  const colon1 = s.indexOf(':', at)
  if (colon1 < 0 || colon1 - at < 1 || colon1 - at > 2) return -1
  const hh = digitsAt(s, at, colon1 - at)
  if (s.charCodeAt(colon1 + 3) !== 58 /* : */) return -1
  const mm = digitsAt(s, colon1 + 1, 2)
  const ss = digitsAt(s, colon1 + 4, 2)
  if (hh < 0 || hh > 23 || mm < 0 || mm > 59 || ss < 0 || ss > 59) return -1
  let i = colon1 + 6
  let frac = 0
  if (i < end) {
    const c = s.charCodeAt(i)
    if (c !== 46 && c !== 44) return -1 // '.' or ',' (both allowed by ISO 8601)
    i++
    let scale = 1
    let num = 0
    const fracStart = i
    for (; i < end; i++) {
      const d = s.charCodeAt(i) - 48
      if (d < 0 || d > 9) return -1
      if (scale < 1e15) {
        num = num * 10 + d
        scale *= 10
      }
    }
    if (i === fracStart) return -1
    frac = num / scale
  }
  return hh * 3600 + mm * 60 + ss + frac
}

/**
 * Seconds from a clock timestamp: 'hh:mm:ss[.sss]' gives seconds of the day (0 <= v < 86400);
 * an ISO 8601 date-time 'YYYY-MM-DD[T ]hh:mm:ss[.sss][Z|+hh:mm|-hh:mm|+hhmm]' gives seconds
 * since 1970-01-01 UTC (no zone is read as UTC: only differences matter for a trace).
 * Anything else gives null.
 */
export function parseClock(s: string): number | null {
  const str = s.trim()
  const n = str.length
  if (n < 7) return null
  if (str.charCodeAt(4) === 45 /* - */ && str.charCodeAt(7) === 45) {
    const y = digitsAt(str, 0, 4)
    const mo = digitsAt(str, 5, 2)
    const d = digitsAt(str, 8, 2)
    if (y < 0 || mo < 1 || mo > 12 || d < 1 || d > daysInMonth(y, mo)) return null
    const sep = str.charCodeAt(10)
    if (sep !== 84 /* T */ && sep !== 116 /* t */ && sep !== 32) return null
    let end = n
    let offset = 0
    const last = str.charCodeAt(n - 1)
    if (last === 90 /* Z */ || last === 122) end = n - 1
    else {
      // zone offset: +hh:mm, +hhmm or +hh after the seconds
      for (let k = n - 1; k > 18; k--) {
        const c = str.charCodeAt(k)
        if (c === 43 || c === 45) {
          const zone = str.slice(k + 1)
          const compact = zone.replace(':', '')
          if (!/^\d{2}(\d{2})?$/.test(compact)) return null
          const zh = Number(compact.slice(0, 2))
          const zm = compact.length === 4 ? Number(compact.slice(2)) : 0
          if (zh > 23 || zm > 59) return null
          offset = (c === 43 ? 1 : -1) * (zh * 3600 + zm * 60)
          end = k
          break
        }
      }
    }
    const tod = timeOfDay(str, 11, end)
    if (tod < 0) return null
    return daysFromCivil(y, mo, d) * 86400 + tod - offset
  }
  const tod = timeOfDay(str, 0, n)
  return tod < 0 ? null : tod
}

/** 'clock' when the sample time cells read as clock timestamps and not as plain numbers. */
export function detectTimeUnit(sampleCells: string[]): 'seconds' | 'ms' | 'clock' {
  let clock = 0
  let numeric = 0
  for (const c of sampleCells) {
    const v = c.trim()
    if (v === '') continue
    if (Number.isFinite(Number(v))) numeric++
    else if (parseClock(v) !== null) clock++
  }
  return clock > numeric ? 'clock' : 'seconds'
}

// --- numbers ----------------------------------------------------------------

const POW10 = [1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22]

/**
 * Strict decimal number: optional sign, digits with one optional decimal mark
 * (charCode 46 '.' or 44 ','), optional exponent; blanks and a CR around are allowed.
 * NaN for anything else ("", "12a00", "0x1A", "1.2.3", "Infinity").
 * Mantissas below 2^53 with a power of ten up to 22 are exact-rounded by one
 * division or multiplication (both operands exact); longer ones go through Number().
 */
export function parseDecimal(s: string, decimalCharCode: number): number {
  // Fast path for the usual logger cell: [-]digits[.digits], at most 15 digits, nothing else.
  // Anything else (blanks, '+', exponent, long mantissa, junk) goes to the general parser.
  const n = s.length
  let i = 0
  let c = n > 0 ? s.charCodeAt(0) : -1
  const neg = c === 45
  if (neg) c = ++i < n ? s.charCodeAt(i) : -1
  let m = 0
  let d = c - 48
  // (d >>> 0) <= 9: one unsigned compare for '0'..'9'
  while ((d >>> 0) <= 9) {
    m = m * 10 + d
    d = ++i < n ? s.charCodeAt(i) - 48 : -49
  }
  let digits = i - (neg ? 1 : 0)
  if (d === -49 && digits > 0) return digits <= 15 ? (neg ? -m : m) : parseDecimalGeneral(s, decimalCharCode)
  if (d + 48 === decimalCharCode) {
    const fracStart = ++i
    d = i < n ? s.charCodeAt(i) - 48 : -49
    while ((d >>> 0) <= 9) {
      m = m * 10 + d
      d = ++i < n ? s.charCodeAt(i) - 48 : -49
    }
    const frac = i - fracStart
    digits += frac
    if (d === -49 && digits > 0 && digits <= 15) {
      const v = frac === 0 ? m : m / POW10[frac]!
      return neg ? -v : v
    }
  }
  return parseDecimalGeneral(s, decimalCharCode)
}

function parseDecimalGeneral(s: string, decimalCharCode: number): number {
  let end = s.length
  let i = 0
  while (i < end && s.charCodeAt(i) === 32) i++
  while (end > i) {
    const c = s.charCodeAt(end - 1)
    if (c === 32 || c === 13 || c === 9) end--
    else break
  }
  if (i >= end) return NaN
  const start = i
  let neg = false
  let c = s.charCodeAt(i)
  if (c === 45) {
    neg = true
    i++
  } else if (c === 43) i++
  let m = 0
  let digits = 0
  let frac = 0
  for (; i < end; i++) {
    c = s.charCodeAt(i) - 48
    if (c < 0 || c > 9) break
    m = m * 10 + c
    digits++
  }
  if (i < end && s.charCodeAt(i) === decimalCharCode) {
    i++
    for (; i < end; i++) {
      c = s.charCodeAt(i) - 48
      if (c < 0 || c > 9) break
      m = m * 10 + c
      digits++
      frac++
    }
  }
  if (digits === 0) return NaN
  let e = 0
  if (i < end) {
    c = s.charCodeAt(i)
    if (c !== 101 && c !== 69) return NaN
    i++
    let eneg = false
    if (i < end) {
      c = s.charCodeAt(i)
      if (c === 45) {
        eneg = true
        i++
      } else if (c === 43) i++
    }
    let ed = 0
    for (; i < end; i++) {
      c = s.charCodeAt(i) - 48
      if (c < 0 || c > 9) return NaN
      if (e < 10000) e = e * 10 + c
      ed++
    }
    if (ed === 0) return NaN
    if (eneg) e = -e
  }
  const exp = e - frac
  let v: number
  if (m <= 9007199254740991 && exp >= -22 && exp <= 22) v = exp < 0 ? m / POW10[-exp]! : m * POW10[exp]!
  else {
    const text = s.slice(start, end)
    v = Number(decimalCharCode === 44 ? text.replace(',', '.') : text)
    if (!Number.isFinite(v)) return NaN
    return v
  }
  return neg ? -v : v
}
