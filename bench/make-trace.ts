// Synthetic logger CSV: an invented circuit driven lap after lap, sampled at `hz`.
// Streams rows as they are generated, so a 6 h file never sits in memory.
// Used by the import benchmark and by tests that need a realistic trace.

import { createWriteStream } from 'node:fs'
import { Readable } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import type { LoggerMapping } from '../shared/domain/logger-mapping'
import type { TraceConfig } from '../shared/domain/trace'
import { makeOverRevBands, makeTraceConfig, rng } from '../db/fixtures'

export interface TraceCsvOptions {
  hz: number
  seconds: number
  /** 10 channels, or 60: fifty more that no figure reads (suspension, temperatures, pressures, as a race car logs) */
  channels?: 10 | 60
  seed?: number
  delimiter?: ',' | ';' | '\t' | '|'
  decimal?: '.' | ','
  newline?: '\n' | '\r\n'
}

export const TRACE_CSV_HEADER = [
  'time_s',
  'engine_rpm',
  'speed_kmh',
  'throttle_pct',
  'gear',
  'oil_temp_c',
  'oil_press_bar',
  'water_temp_c',
  'lat_accel_g',
  'brake_press_bar',
] as const

/** The fifty extra channels of a 60-channel file: names of no particular logger. */
export const TRACE_CSV_EXTRA_HEADER = Array.from({ length: 50 }, (_, i) => `aux_${String(i + 1).padStart(2, '0')}`)

/** The mapping that reads a makeTraceCsv file (delimiter and decimal as generated). */
export function traceCsvMapping(opts: Pick<TraceCsvOptions, 'delimiter' | 'decimal'> = {}): LoggerMapping {
  return {
    columns: {
      time: 'time_s',
      rpm: 'engine_rpm',
      speed: 'speed_kmh',
      oilTemp: 'oil_temp_c',
      oilPressure: 'oil_press_bar',
      waterTemp: 'water_temp_c',
      throttle: 'throttle_pct',
      gear: 'gear',
    },
    units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' },
    delimiter: opts.delimiter ?? ',',
    decimal: opts.decimal ?? '.',
  }
}

// The engine type the synthetic files are analysed with: invented over-rev bands (levels as in common practice: log, inspect, teardown).
export const BENCH_TRACE_CONFIG: TraceConfig = makeTraceConfig({
  idleRpm: 2500,
  bandWidthRpm: 250,
  maxGapS: 0.5,
  overRevBands: makeOverRevBands([['log', 9000, 0.1], ['inspect', 9300, 0.05], ['teardown', 9600, 0]]),
  lowOilPressure: { belowBar: 2.5, aboveRpm: 4000, minDurationS: 0.2 },
})

// Invented circuit: segment length (m) and corner radius (m, 0 = straight).
const CIRCUIT: [number, number][] = [
  [820, 0], [60, 35], [240, 0], [110, 90], [380, 0], [70, 25], [150, 0], [200, 160],
  [520, 0], [90, 45], [130, 0], [160, 70], [300, 0], [80, 30], [640, 0], [120, 110],
]
const G = 9.80665
const GRIP = 1.7 // lateral grip with downforce, in g
const BRAKE_DECEL = 24 // m/s^2
const POWER_W = 360_000
const MASS_KG = 1250
const DRAG_PER_MASS = 3.8e-4 // 0.5 rho CdA / m, 1/m
const TYRE_CIRCUMFERENCE_M = 2.0
const GEAR_TOP_KMH = [108, 148, 188, 226, 262, 298] // speed at 9,000 rpm per gear
const UPSHIFT_RPM = 8700
const DOWNSHIFT_RPM = 5600
const IDLE_RPM = 1400
const IDLE_AT_START_S = 60
const PIT_EVERY_LAPS = 40
const PIT_IDLE_S = 30

interface LapPoint { v: number; lat: number; accel: number; surge: boolean }
/** Oil surge can show in this long fast corner (index into CIRCUIT). */
const SURGE_CORNER = 15
const SURGE_EVERY_LAPS = 7

/** Speed along the lap at 1 m steps: grip-limited corners, power-limited straights, braking zones. */
function lapProfile(): LapPoint[] {
  const vmax: number[] = []
  const radius: number[] = []
  const surge: boolean[] = []
  CIRCUIT.forEach(([len, r], seg) => {
    for (let i = 0; i < len; i++) {
      vmax.push(r > 0 ? Math.sqrt(GRIP * G * r) : 1e9)
      radius.push(r)
      surge.push(seg === SURGE_CORNER && i > len / 3)
    }
  })
  const n = vmax.length
  const v = new Array<number>(n).fill(0)
  // two forward and backward passes close the lap (exit speed of the last corner feeds the start)
  for (let pass = 0; pass < 2; pass++) {
    for (let i = 0; i < n; i++) {
      const p = v[(i - 1 + n) % n]!
      const a = Math.min(11, POWER_W / (MASS_KG * Math.max(p, 5))) - DRAG_PER_MASS * p * p
      v[i] = Math.min(vmax[i]!, Math.sqrt(Math.max(p * p + 2 * a, 1)))
    }
    for (let i = n - 1; i >= 0; i--) {
      const nx = v[(i + 1) % n]!
      v[i] = Math.min(v[i]!, Math.sqrt(nx * nx + 2 * BRAKE_DECEL))
    }
  }
  return v.map((vi, i) => {
    const nx = v[(i + 1) % n]!
    const r = radius[i]!
    return { v: vi, lat: r > 0 ? (vi * vi) / r / G : 0, accel: (nx * nx - vi * vi) / 2, surge: surge[i]! }
  })
}

const GEAR_RATIO = GEAR_TOP_KMH.map((kmh) => (9000 * TYRE_CIRCUMFERENCE_M) / (60 * (kmh / 3.6)))

/** Yields one formatted CSV row per sample. */
class TraceRows {
  private readonly rnd: () => number
  private readonly lap = lapProfile()
  private readonly dt: number
  private readonly total: number
  private readonly timeDecimals: number
  private readonly sep: string
  private readonly dec: string
  private readonly nl: string
  private readonly extra: boolean
  private k = 0
  private s = 0 // metres into the lap
  private lapNo = 0
  private gear = 1
  private pitLeft = 0
  private spikeLeft = 0
  private spikeRpm = 0

  constructor(opts: TraceCsvOptions) {
    this.rnd = rng(opts.seed ?? 20240611)
    this.dt = 1 / opts.hz
    this.total = Math.round(opts.seconds * opts.hz)
    this.timeDecimals = Math.max(0, Math.ceil(Math.log10(opts.hz) - 1e-9))
    this.sep = opts.delimiter ?? ','
    this.dec = opts.decimal ?? '.'
    this.nl = opts.newline ?? '\n'
    this.extra = opts.channels === 60
  }

  get done(): boolean {
    return this.k >= this.total
  }

  header(): string {
    return (this.extra ? [...TRACE_CSV_HEADER, ...TRACE_CSV_EXTRA_HEADER] : TRACE_CSV_HEADER).join(this.sep) + this.nl
  }

  private num(v: number, digits: number): string {
    const s = v.toFixed(digits)
    return this.dec === '.' ? s : s.replace('.', ',')
  }

  next(): string {
    const t = this.k * this.dt
    const noise = () => this.rnd() - 0.5
    const warm = Math.min(1, t / 900)
    let v = 0
    let lat = 0
    let throttle = 0
    let brake = 0
    let surge = false
    let rpm: number
    if (t < IDLE_AT_START_S || this.pitLeft > 0) {
      if (this.pitLeft > 0) this.pitLeft -= this.dt
      rpm = IDLE_RPM + 40 * noise()
      this.gear = 0
      throttle = 2 + noise()
    } else {
      const i = Math.floor(this.s) % this.lap.length
      const p = this.lap[i]!
      v = p.v
      lat = p.lat
      surge = p.surge && this.lapNo % SURGE_EVERY_LAPS === 3
      if (p.accel < -0.5) brake = Math.min(120, -p.accel * 4.5)
      else throttle = p.accel > 0.5 ? 100 : Math.min(100, 35 + 40 * lat / GRIP)
      if (this.gear === 0) this.gear = 1
      const rpmIn = (g: number) => ((v / TYRE_CIRCUMFERENCE_M) * 60 * GEAR_RATIO[g - 1]!)
      while (this.gear < 6 && rpmIn(this.gear) > UPSHIFT_RPM) this.gear++
      while (this.gear > 1 && rpmIn(this.gear) < DOWNSHIFT_RPM && rpmIn(this.gear - 1) < UPSHIFT_RPM) this.gear--
      rpm = Math.max(3200, rpmIn(this.gear)) + 15 * noise()
      // occasional driver errors: a late upshift on the long straight, a missed downshift into a hairpin
      if (this.spikeLeft <= 0 && i === 700 && this.lapNo % 5 === 2) {
        this.spikeLeft = 0.4
        this.spikeRpm = 9080
      } else if (this.spikeLeft <= 0 && i === 1340 && this.lapNo % 13 === 7) {
        this.spikeLeft = 0.25
        this.spikeRpm = 9720
      }
      if (this.spikeLeft > 0) {
        this.spikeLeft -= this.dt
        rpm = Math.max(rpm, this.spikeRpm + 20 * noise())
      }
      this.s += v * this.dt
      if (this.s >= this.lap.length) {
        this.s -= this.lap.length
        this.lapNo++
        if (this.lapNo % PIT_EVERY_LAPS === 0) this.pitLeft = PIT_IDLE_S
      }
    }
    const oilT = 70 + 45 * warm + (rpm / 9000) * 4 + 0.3 * noise()
    const waterT = 72 + 20 * warm + 0.2 * noise()
    // oil surge: now and then the pressure sags late in the long fast corner
    const oilP = Math.max(0.4, Math.min(6.2, 1.1 + rpm / 1900 - (surge ? 2.4 : 0)) + 0.05 * noise())
    const row = [
      this.num(t, this.timeDecimals),
      Math.round(rpm).toString(),
      this.num(Math.max(0, v * 3.6 + (v > 0 ? 0.3 * noise() : 0)), 1),
      this.num(Math.max(0, throttle), 1),
      this.gear.toString(),
      this.num(oilT, 1),
      this.num(oilP, 2),
      this.num(waterT, 1),
      this.num(lat > 0 ? lat + 0.02 * noise() : 0, 2),
      this.num(brake, 1),
    ]
    if (this.extra) {
      // slow-moving channels beside the fast ones: plausible widths of cells, values of no meaning
      for (let i = 0; i < 50; i++) row.push(this.num((i % 3 === 0 ? oilT : i % 3 === 1 ? lat * 40 : oilP * 10) + i * 0.37, i % 4 === 0 ? 1 : 2))
    }
    const line = row.join(this.sep)
    this.k++
    return line + this.nl
  }
}

/** A readable stream of a synthetic 10-channel logger CSV (header row first). */
export function makeTraceCsv(opts: TraceCsvOptions): Readable {
  if (!(opts.hz > 0) || !(opts.seconds >= 0)) throw new RangeError('hz must be > 0 and seconds >= 0')
  const rows = new TraceRows(opts)
  let headerSent = false
  return new Readable({
    highWaterMark: 256 * 1024,
    read() {
      let out = headerSent ? '' : rows.header()
      headerSent = true
      for (let n = 0; n < 2000 && !rows.done; n++) out += rows.next()
      if (out) this.push(Buffer.from(out, 'utf8'))
      if (rows.done) this.push(null)
    },
  })
}

export async function writeTraceFile(path: string, opts: TraceCsvOptions): Promise<void> {
  await pipeline(makeTraceCsv(opts), createWriteStream(path))
}
