import { describe, expect, it } from 'vitest'
import {
  ISO4406_ABOVE_TABLE,
  ISO4406_UPPER_BOUNDS,
  iso4406,
  iso4406Code,
  particlesPerMl,
} from '../../shared/domain/oil/iso4406'

// Source for every bound below: ISO 4406:1999 table 1, as reproduced.
const TABLE: [number, number, number][] = [
  [0, 0, 0.01], [1, 0.01, 0.02], [2, 0.02, 0.04], [3, 0.04, 0.08], [4, 0.08, 0.16], [5, 0.16, 0.32],
  [6, 0.32, 0.64], [7, 0.64, 1.3], [8, 1.3, 2.5], [9, 2.5, 5], [10, 5, 10], [11, 10, 20], [12, 20, 40],
  [13, 40, 80], [14, 80, 160], [15, 160, 320], [16, 320, 640], [17, 640, 1300], [18, 1300, 2500],
  [19, 2500, 5000], [20, 5000, 10000], [21, 10000, 20000], [22, 20000, 40000], [23, 40000, 80000],
  [24, 80000, 160000], [25, 160000, 320000], [26, 320000, 640000], [27, 640000, 1300000], [28, 1300000, 2500000],
]

describe('iso4406Code (ISO 4406:1999 table, as reproduced)', () => {
  it('holds the 29 upper bounds of the table', () => {
    expect(ISO4406_UPPER_BOUNDS).toEqual(TABLE.map((r) => r[2]))
  })

  it.each(TABLE)('code %i: upper bound %f is included, just above the lower bound %f is in', (code, lower, upper) => {
    expect(iso4406Code(upper)).toBe(code)
    if (code > 0) {
      expect(iso4406Code(lower * 1.000001)).toBe(code)
      expect(iso4406Code(lower)).toBe(code - 1)
    }
  })

  it('reads the rounded bounds from the table, not a doubling formula', () => {
    expect(iso4406Code(10.1)).toBe(11)
    expect(iso4406Code(1305)).toBe(18)
    expect(iso4406Code(1300)).toBe(17)
    expect(iso4406Code(1.3)).toBe(7)
    expect(iso4406Code(1.31)).toBe(8)
  })

  it('exact upper bound 20 is code 11, 20.0001 is code 12', () => {
    expect(iso4406Code(20)).toBe(11)
    expect(iso4406Code(20.0001)).toBe(12)
  })

  it('0 for counts up to 0.01 per mL, including none', () => {
    expect(iso4406Code(0)).toBe(0)
    expect(iso4406Code(0.005)).toBe(0)
    expect(iso4406Code(0.01)).toBe(0)
    expect(iso4406Code(0.0101)).toBe(1)
  })

  it('above 2,500,000 per mL lies beyond the table', () => {
    expect(iso4406Code(2_500_000)).toBe(28)
    expect(iso4406Code(2_500_001)).toBe(ISO4406_ABOVE_TABLE)
    expect(ISO4406_ABOVE_TABLE).toBe(29)
  })

  it('refuses negative and non-finite counts', () => {
    expect(() => iso4406Code(-1)).toThrow(RangeError)
    expect(() => iso4406Code(Number.NaN)).toThrow(RangeError)
    expect(() => iso4406Code(Number.POSITIVE_INFINITY)).toThrow(RangeError)
  })
})

describe('iso4406 code string', () => {
  it('worked example: 300,000 / 50,000 / 700 particles per 100 mL gives 19/16/10 (ISO 4406:1999, as reproduced)', () => {
    const counts = {
      p4: particlesPerMl(300_000, 100),
      p6: particlesPerMl(50_000, 100),
      p14: particlesPerMl(700, 100),
    }
    expect(counts).toEqual({ p4: 3000, p6: 500, p14: 7 })
    expect(iso4406(counts)).toBe('19/16/10')
  })

  it("prefixes '>=' on a scale number counted from fewer than 20 particles (ISO 4406:1999, as reproduced)", () => {
    const counts = { p4: 3000, p6: 500, p14: 7 }
    expect(iso4406(counts, { countedParticles: { p4: 30000, p6: 5000, p14: 19 } })).toBe('19/16/>=10')
    // exactly 20 counted is enough
    expect(iso4406(counts, { countedParticles: { p4: 30000, p6: 5000, p14: 20 } })).toBe('19/16/10')
    expect(iso4406(counts, { countedParticles: { p14: 3 } })).toBe('19/16/>=10')
  })

  it("writes '-' for a channel that was not measured (e.g. a microscope count without 4 um)", () => {
    expect(iso4406({ p4: null, p6: 500, p14: 7 })).toBe('-/16/10')
    expect(iso4406({ p4: 3000, p6: null, p14: null })).toBe('19/-/-')
  })

  it('null when nothing was measured', () => {
    expect(iso4406({ p4: null, p6: null, p14: null })).toBeNull()
  })

  it("writes '>28' beyond the table", () => {
    expect(iso4406({ p4: 3_000_000, p6: 2_000_000, p14: 1_000 })).toBe('>28/28/17')
  })

  it('particlesPerMl refuses a zero volume', () => {
    expect(() => particlesPerMl(10, 0)).toThrow(RangeError)
  })
})
