import { describe, expect, it } from 'vitest'
import {
  KM_PER_MILE,
  PA_PER_PSI,
  barToPsi,
  cToF,
  cToK,
  fToC,
  fromBar,
  fromCelsius,
  fromKmh,
  inchToMm,
  kmhToMph,
  kpaToBar,
  mphToKmh,
  poundToKg,
  psiToBar,
  toBar,
  toCelsius,
  toKmh,
} from '../../shared/domain/units'

// Source for every factor: NIST SP 811, appendix B (exact by definition unless marked).
describe('defining factors (NIST SP 811, appendix B)', () => {
  it('1 mile = 1.609344 km exactly', () => {
    expect(KM_PER_MILE).toBe(1.609344)
    expect(mphToKmh(1)).toBe(1.609344)
    expect(mphToKmh(100)).toBeCloseTo(160.9344, 10)
  })

  it('1 in = 25.4 mm and 1 lb = 0.45359237 kg exactly', () => {
    expect(inchToMm(1)).toBe(25.4)
    expect(poundToKg(1)).toBe(0.45359237)
  })

  it('1 psi = 6,894.757 Pa (NIST rounds to 7 figures) and 1 bar = 14.503774 psi', () => {
    expect(PA_PER_PSI).toBeCloseTo(6894.757, 3)
    expect(psiToBar(1)).toBeCloseTo(0.06894757, 8)
    expect(barToPsi(1)).toBeCloseTo(14.503774, 6)
  })

  it('1 bar = 100 kPa', () => {
    expect(kpaToBar(100)).toBe(1)
    expect(kpaToBar(350)).toBeCloseTo(3.5, 12)
  })

  it('F = C x 9/5 + 32: -40 C = -40 F, 212 F = 100 C, 32 F = 0 C', () => {
    expect(fToC(-40)).toBe(-40)
    expect(fToC(212)).toBeCloseTo(100, 12)
    expect(fToC(32)).toBe(0)
    expect(cToF(100)).toBeCloseTo(212, 12)
  })

  it('K = C + 273.15', () => {
    expect(cToK(0)).toBe(273.15)
    expect(cToK(100)).toBeCloseTo(373.15, 10)
  })
})

describe('unit selectors', () => {
  it('toKmh / fromKmh', () => {
    expect(toKmh(120, 'kmh')).toBe(120)
    expect(toKmh(60, 'mph')).toBeCloseTo(96.56064, 10)
    expect(fromKmh(96.56064, 'mph')).toBeCloseTo(60, 10)
    // NIST SP 811: 1 mile = 1.609344 km, so 73 mph = 117.482112 km/h
    expect(mphToKmh(73)).toBeCloseTo(117.482112, 9)
    expect(kmhToMph(117.482112)).toBeCloseTo(73, 9)
  })

  it('toCelsius / fromCelsius', () => {
    expect(toCelsius(110, 'C')).toBe(110)
    expect(toCelsius(230, 'F')).toBeCloseTo(110, 12)
    expect(fromCelsius(110, 'F')).toBeCloseTo(230, 12)
  })

  it('toBar / fromBar', () => {
    expect(toBar(4.5, 'bar')).toBe(4.5)
    expect(toBar(450, 'kPa')).toBeCloseTo(4.5, 12)
    expect(toBar(14.503774, 'psi')).toBeCloseTo(1, 6)
    expect(fromBar(1, 'psi')).toBeCloseTo(14.503774, 6)
    expect(fromBar(2, 'kPa')).toBe(200)
  })

  it('rejects an unknown unit', () => {
    expect(() => toBar(1, 'atm' as never)).toThrow(RangeError)
    expect(() => toKmh(1, 'knot' as never)).toThrow(RangeError)
    expect(() => toCelsius(1, 'K' as never)).toThrow(RangeError)
  })
})
