// A trace configuration is checked once, before the first sample.

import type { TraceConfig } from './types'

export class TraceConfigError extends RangeError {}

function requireFinite(name: string, v: number, min: number): void {
  if (!Number.isFinite(v) || v < min) throw new TraceConfigError(`${name} must be a number >= ${min}, got ${v}`)
}

export function validateTraceConfig(cfg: TraceConfig): void {
  requireFinite('idleRpm', cfg.idleRpm, 0)
  requireFinite('bandWidthRpm', cfg.bandWidthRpm, Number.MIN_VALUE)
  requireFinite('maxGapS', cfg.maxGapS, Number.MIN_VALUE)
  for (const b of cfg.overRevBands) {
    requireFinite(`overRevBands[${b.id}].minRpm`, b.minRpm, 0)
    requireFinite(`overRevBands[${b.id}].minDurationS`, b.minDurationS, 0)
    requireFinite(`overRevBands[${b.id}].hysteresisRpm`, b.hysteresisRpm, 0)
  }
  const ids = new Set(cfg.overRevBands.map((b) => b.id))
  if (ids.size !== cfg.overRevBands.length) throw new TraceConfigError('overRevBands ids must be unique')
  requireFinite('lowOilPressure.belowBar', cfg.lowOilPressure.belowBar, -Infinity)
  requireFinite('lowOilPressure.aboveRpm', cfg.lowOilPressure.aboveRpm, 0)
  requireFinite('lowOilPressure.minDurationS', cfg.lowOilPressure.minDurationS, 0)
  if (cfg.trackLengthKm !== null) requireFinite('trackLengthKm', cfg.trackLengthKm, 0)
  if (cfg.laps !== null) requireFinite('laps', cfg.laps, 0)
}
