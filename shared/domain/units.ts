// Unit conversions with the exact defining factors of NIST SP 811, appendix B.
// psi is derived from the pound, standard gravity and the inch rather than a rounded constant.

export const KM_PER_MILE = 1.609344
export const MM_PER_INCH = 25.4
export const KG_PER_POUND = 0.45359237
export const STANDARD_GRAVITY = 9.80665 // m/s^2
export const PA_PER_BAR = 100_000
export const PA_PER_PSI = (KG_PER_POUND * STANDARD_GRAVITY) / (MM_PER_INCH / 1000) ** 2
export const KELVIN_OFFSET = 273.15

export type SpeedUnit = 'kmh' | 'mph'
export type TempUnit = 'C' | 'F'
export type PressureUnit = 'bar' | 'kPa' | 'psi'

export function mphToKmh(v: number): number {
  return v * KM_PER_MILE
}
export function kmhToMph(v: number): number {
  return v / KM_PER_MILE
}
export function fToC(f: number): number {
  return ((f - 32) * 5) / 9
}
export function cToF(c: number): number {
  return (c * 9) / 5 + 32
}
export function cToK(c: number): number {
  return c + KELVIN_OFFSET
}
export function kpaToBar(p: number): number {
  return (p * 1000) / PA_PER_BAR
}
export function barToKpa(p: number): number {
  return (p * PA_PER_BAR) / 1000
}
export function psiToBar(p: number): number {
  return (p * PA_PER_PSI) / PA_PER_BAR
}
export function barToPsi(p: number): number {
  return (p * PA_PER_BAR) / PA_PER_PSI
}
export function inchToMm(v: number): number {
  return v * MM_PER_INCH
}
export function poundToKg(v: number): number {
  return v * KG_PER_POUND
}

function unknownUnit(u: never): never {
  throw new RangeError(`unknown unit: ${String(u)}`)
}

export function toKmh(v: number, u: SpeedUnit): number {
  if (u === 'kmh') return v
  if (u === 'mph') return mphToKmh(v)
  return unknownUnit(u)
}
export function fromKmh(v: number, u: SpeedUnit): number {
  if (u === 'kmh') return v
  if (u === 'mph') return kmhToMph(v)
  return unknownUnit(u)
}
export function toCelsius(v: number, u: TempUnit): number {
  if (u === 'C') return v
  if (u === 'F') return fToC(v)
  return unknownUnit(u)
}
export function fromCelsius(v: number, u: TempUnit): number {
  if (u === 'C') return v
  if (u === 'F') return cToF(v)
  return unknownUnit(u)
}
export function toBar(v: number, u: PressureUnit): number {
  if (u === 'bar') return v
  if (u === 'kPa') return kpaToBar(v)
  if (u === 'psi') return psiToBar(v)
  return unknownUnit(u)
}
export function fromBar(v: number, u: PressureUnit): number {
  if (u === 'bar') return v
  if (u === 'kPa') return barToKpa(v)
  if (u === 'psi') return barToPsi(v)
  return unknownUnit(u)
}
