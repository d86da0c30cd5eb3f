import { describe, expect, it } from 'vitest'
import {
  displacementCc,
  engineTypeSheet,
  firingIntervalDeg,
  inertiaForce,
  inertiaForceAtRpm,
  inertiaForceTable,
  meanPistonSpeed,
  peakPistonSpeed,
  pistonAcceleration,
  pistonDisplacement,
  pistonVelocity,
} from '../../shared/domain/kinematics'

function expectRel(actual: number, expected: number, rel: number) {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel)
}

// Worked case: stroke 90 mm, conrod 145 mm, 7,500 rpm.
// Source: Heywood, Internal Combustion Engine Fundamentals, ch. 2 slider-crank relations;
// the numbers are the [derived] worked case of the project's check values.
const STROKE = 90
const ROD = 145
const RPM = 7500

describe('slider-crank worked case (Heywood ch. 2, worked case [derived])', () => {
  it('mean piston speed Sp = 2 L N is 22.500 m/s (1e-9 relative)', () => {
    expectRel(meanPistonSpeed(STROKE, RPM), 22.5, 1e-9)
  })

  it('exact acceleration at TDC is 36,372.9 m/s^2 (0.01 %)', () => {
    expectRel(pistonAcceleration(STROKE, ROD, RPM, 0, 'exact'), 36372.9, 1e-4)
  })

  it('exact acceleration at BDC is -19,143.6 m/s^2 (0.01 %)', () => {
    expectRel(pistonAcceleration(STROKE, ROD, RPM, 180, 'exact'), -19143.6, 1e-4)
  })

  it('both forms give a w^2 (1 + 1/R) at TDC and -a w^2 (1 - 1/R) at BDC', () => {
    const a = 0.045
    const w = (2 * Math.PI * RPM) / 60
    const R = ROD / 45
    for (const form of ['exact', 'two-term'] as const) {
      expectRel(pistonAcceleration(STROKE, ROD, RPM, 0, form), a * w * w * (1 + 1 / R), 1e-12)
      expectRel(pistonAcceleration(STROKE, ROD, RPM, 180, form), -a * w * w * (1 - 1 / R), 1e-12)
    }
  })

  it('displacement from TDC at 60 / 90 degrees is 27.8352 / 52.1595 mm (1e-4 mm)', () => {
    expect(Math.abs(pistonDisplacement(STROKE, ROD, 60) - 27.8352)).toBeLessThanOrEqual(1e-4)
    expect(Math.abs(pistonDisplacement(STROKE, ROD, 90) - 52.1595)).toBeLessThanOrEqual(1e-4)
  })

  it('displacement is 0 at TDC and the full stroke at BDC', () => {
    expect(pistonDisplacement(STROKE, ROD, 0)).toBeCloseTo(0, 12)
    expect(pistonDisplacement(STROKE, ROD, 180)).toBeCloseTo(90, 12)
  })

  it('velocity at 90 degrees is 35.3429 m/s (1e-4)', () => {
    expect(Math.abs(pistonVelocity(STROKE, ROD, RPM, 90) - 35.3429)).toBeLessThanOrEqual(1e-4)
  })

  it('acceleration at 90 degrees: exact -9,062.1, two-term -8,614.6 m/s^2 (0.01 %), about 5 % apart', () => {
    const exact = pistonAcceleration(STROKE, ROD, RPM, 90, 'exact')
    const twoTerm = pistonAcceleration(STROKE, ROD, RPM, 90, 'two-term')
    expectRel(exact, -9062.1, 1e-4)
    expectRel(twoTerm, -8614.6, 1e-4)
    const gap = Math.abs(exact - twoTerm) / Math.abs(twoTerm)
    expect(gap).toBeGreaterThan(0.04)
    expect(gap).toBeLessThan(0.06)
  })

  it('the exact form is the default', () => {
    expect(pistonAcceleration(STROKE, ROD, RPM, 90)).toBe(pistonAcceleration(STROKE, ROD, RPM, 90, 'exact'))
  })

  it('peak piston speed is 37.019 m/s (1e-3) at about 74.1 degrees (0.05 deg)', () => {
    const peak = peakPistonSpeed(STROKE, ROD, RPM)
    expect(Math.abs(peak.speed - 37.019)).toBeLessThanOrEqual(1e-3)
    expect(Math.abs(peak.crankDeg - 74.1)).toBeLessThanOrEqual(0.05)
  })

  it('inertia force at TDC for 0.5 kg reciprocating mass is 18,186 N (0.01 %)', () => {
    expectRel(inertiaForce(0.5, pistonAcceleration(STROKE, ROD, RPM, 0)), 18186, 1e-4)
  })

  it('acceleration scales with rpm^2: 41,384 m/s^2 at 8,000 rpm (0.01 %)', () => {
    expectRel(pistonAcceleration(STROKE, ROD, 8000, 0), 41384, 1e-4)
    expectRel(pistonAcceleration(STROKE, ROD, 8000, 0) / pistonAcceleration(STROKE, ROD, RPM, 0), 1.13778, 1e-5)
  })
})

describe('slider-crank cross-checks by numerical differentiation (known answer: v = dx/dt, a = dv/dt)', () => {
  const w = (2 * Math.PI * RPM) / 60
  const hDeg = 1e-3
  const degPerSecond = (w * 180) / Math.PI
  for (const deg of [10, 45, 74, 90, 120, 150, 200, 300]) {
    it(`velocity and exact acceleration at ${deg} degrees match central differences`, () => {
      const dt = hDeg / degPerSecond
      const dx = (pistonDisplacement(STROKE, ROD, deg + hDeg) - pistonDisplacement(STROKE, ROD, deg - hDeg)) / 1000
      expectRel(pistonVelocity(STROKE, ROD, RPM, deg), dx / (2 * dt), 1e-6)
      const dv = pistonVelocity(STROKE, ROD, RPM, deg + hDeg) - pistonVelocity(STROKE, ROD, RPM, deg - hDeg)
      expectRel(pistonAcceleration(STROKE, ROD, RPM, deg, 'exact'), dv / (2 * dt), 1e-5)
    })
  }

  it('peak speed matches a brute-force scan over the revolution at 0.001 degree steps', () => {
    let best = { speed: -Infinity, crankDeg: 0 }
    for (let i = 0; i <= 360_000; i++) {
      const v = pistonVelocity(STROKE, ROD, RPM, i / 1000)
      if (v > best.speed) best = { speed: v, crankDeg: i / 1000 }
    }
    const peak = peakPistonSpeed(STROKE, ROD, RPM)
    expect(peak.speed).toBeGreaterThanOrEqual(best.speed - 1e-9)
    expect(Math.abs(peak.speed - best.speed)).toBeLessThan(1e-6)
    expect(Math.abs(peak.crankDeg - best.crankDeg)).toBeLessThan(2e-3)
  })

  it('the two-term form approaches the exact form as the rod grows long', () => {
    const longRod = 5000
    expectRel(pistonAcceleration(STROKE, longRod, RPM, 90, 'two-term'), pistonAcceleration(STROKE, longRod, RPM, 90), 1e-3)
  })

  it('rejects a rod no longer than the crank radius', () => {
    expect(() => pistonDisplacement(90, 45, 30)).toThrow(RangeError)
    expect(() => pistonVelocity(90, 40, RPM, 30)).toThrow(RangeError)
  })
})

describe('firing interval (from memory; common engine-design knowledge)', () => {
  const fourStroke: [number, number][] = [
    [4, 180],
    [5, 144],
    [6, 120],
    [8, 90],
    [10, 72],
    [12, 60],
  ]
  for (const [cylinders, deg] of fourStroke) {
    it(`four-stroke ${cylinders} cylinders fire every ${deg} degrees`, () => {
      expect(firingIntervalDeg(cylinders)).toBe(deg)
      expect(firingIntervalDeg(cylinders, 4)).toBe(deg)
    })
  }

  it('two-stroke: 360 / cylinders (from memory; common engine-design knowledge)', () => {
    expect(firingIntervalDeg(2, 2)).toBe(180)
    expect(firingIntervalDeg(3, 2)).toBe(120)
    expect(firingIntervalDeg(1, 2)).toBe(360)
  })

  it('an inline six fires 120 degrees apart (common practice)', () => {
    expect(firingIntervalDeg(6, 4)).toBe(120)
  })

  it('rejects a cylinder count that is not a positive integer', () => {
    expect(() => firingIntervalDeg(0)).toThrow(RangeError)
    expect(() => firingIntervalDeg(2.5)).toThrow(RangeError)
  })
})

describe('displacement (known answers: pi/4 B^2 L z)', () => {
  it('100 x 100 mm single cylinder is 250 pi cc', () => {
    expect(displacementCc(100, 100, 1)).toBeCloseTo(250 * Math.PI, 10)
  })

  it('86 x 86 mm four cylinder is 1,998.23 cc (hand-computed)', () => {
    expect(displacementCc(86, 86, 4)).toBeCloseTo(1998.23, 2)
  })
})

describe('engine type sheet', () => {
  // Invented engine type: eight cylinders, 92 x 90 mm, 145 mm rods, 7,500 rpm limit.
  const sheet = engineTypeSheet({
    cylinders: 8,
    boreMm: 92,
    strokeMm: STROKE,
    conrodMm: ROD,
    revLimitRpm: RPM,
    reciprocatingMassKg: 0.5,
  })

  it('carries the worked-case figures at the rev limit (Heywood ch. 2, worked case [derived])', () => {
    expectRel(sheet.meanPistonSpeedAtLimit, 22.5, 1e-9)
    expect(Math.abs(sheet.peakPistonSpeedAtLimit - 37.019)).toBeLessThanOrEqual(1e-3)
    expectRel(sheet.pistonAccelTdcAtLimit, 36372.9, 1e-4)
    expectRel(sheet.pistonAccelBdcAtLimit, -19143.6, 1e-4)
    expect(sheet.inertiaForceTdcAtLimit).not.toBeNull()
    expectRel(sheet.inertiaForceTdcAtLimit ?? 0, 18186, 1e-4)
  })

  it('gives displacement, firing interval and rod ratios', () => {
    expect(sheet.displacementCc).toBeCloseTo(((Math.PI / 4) * 92 * 92 * 90 * 8) / 1000, 9)
    expect(sheet.firingIntervalDeg).toBe(90)
    expect(sheet.rodRatio).toBeCloseTo(145 / 90, 12)
    expect(sheet.rodToCrankRadius).toBeCloseTo(145 / 45, 12)
  })

  it('leaves the inertia force empty without a reciprocating mass, and honours two-stroke', () => {
    const s = engineTypeSheet({ cylinders: 2, boreMm: 54, strokeMm: 54.5, conrodMm: 110, revLimitRpm: 12000, strokes: 2 })
    expect(s.inertiaForceTdcAtLimit).toBeNull()
    expect(s.inertiaForces).toBeNull()
    expect(s.firingIntervalDeg).toBe(180)
    const n = engineTypeSheet({ cylinders: 4, boreMm: 82, strokeMm: 94, conrodMm: 150, revLimitRpm: 7000, reciprocatingMassKg: null })
    expect(n.inertiaForceTdcAtLimit).toBeNull()
    expect(n.inertiaForces).toBeNull()
  })
})

describe('reciprocating inertia force F = m a (Heywood, Internal Combustion Engine Fundamentals, ch. 2; exact acceleration form)', () => {
  it('0.5 kg, stroke 90 mm, conrod 145 mm, 7,500 rpm: 18,186 N at TDC (worked case [derived], 0.01 %)', () => {
    expectRel(inertiaForceAtRpm(STROKE, ROD, 0.5, RPM).tdcN, 18186, 1e-4)
  })

  it('same case at BDC: 0.5 kg x -19,143.6 m/s^2 = -9,571.8 N (worked case [derived], 0.01 %)', () => {
    expectRel(inertiaForceAtRpm(STROKE, ROD, 0.5, RPM).bdcN, -9571.8, 1e-4)
  })

  it('at an over-rev threshold, hand-computed from m a w^2 (1 + 1/R): 0.52 kg, stroke 81 mm, conrod 140 mm, 9,900 rpm = 29,183.4 N', () => {
    // Heywood ch. 2 at TDC, numbers written out:
    //   a = 81 / 2 = 40.5 mm = 0.0405 m; R = 140 / 40.5 = 3.45679; 1 + 1/R = 1 + 40.5/140 = 1.289286
    //   w = 2 pi 9,900 / 60 = 1,036.7256 rad/s; w^2 = 1,074,799.92 rad^2/s^2
    //   F = 0.52 x 0.0405 x 1,074,799.92 x 1.289286 = 29,183.35 N
    const w = (2 * Math.PI * 9900) / 60
    const byHand = 0.52 * 0.0405 * w * w * (1 + 40.5 / 140)
    expectRel(byHand, 29183.35, 1e-6)
    const f = inertiaForceAtRpm(81, 140, 0.52, 9900)
    expectRel(f.tdcN, byHand, 1e-12)
    expectRel(f.tdcN, 29183.35, 1e-6)
    // BDC: -m a w^2 (1 - 1/R) = -0.52 x 0.0405 x 1,074,799.92 x (1 - 40.5/140) = -16,087.22 N
    expectRel(f.bdcN, -16087.22, 1e-6)
  })

  it('scales with rpm^2: 8,000 / 7,500 rpm gives x 1.13778, 0.5 kg x 41,384 m/s^2 = 20,692 N (worked case [derived], 0.01 %)', () => {
    const at7500 = inertiaForceAtRpm(STROKE, ROD, 0.5, 7500)
    const at8000 = inertiaForceAtRpm(STROKE, ROD, 0.5, 8000)
    expectRel(at8000.tdcN, 20692, 1e-4)
    expectRel(at8000.tdcN / at7500.tdcN, 1.13778, 1e-5)
    expectRel(at8000.bdcN / at7500.bdcN, 1.13778, 1e-5)
    expectRel(inertiaForceAtRpm(STROKE, ROD, 0.5, 15000).tdcN, 4 * 18186, 1e-4)
  })

  it('refuses a mass that is not positive and an rpm that is no speed', () => {
    expect(() => inertiaForceAtRpm(STROKE, ROD, 0, RPM)).toThrow(RangeError)
    expect(() => inertiaForceAtRpm(STROKE, ROD, -0.5, RPM)).toThrow(RangeError)
    expect(() => inertiaForceAtRpm(STROKE, ROD, 0.5, Number.NaN)).toThrow(RangeError)
    expect(() => inertiaForceAtRpm(STROKE, 40, 0.5, RPM)).toThrow(RangeError)
  })
})

describe('inertia force table: the rev limit and each over-rev threshold', () => {
  // Invented V8: stroke 81 mm, conrod 140 mm, 0.52 kg, limit 9,200 rpm, bands listed out of order on purpose.
  const type = {
    strokeMm: 81,
    conrodMm: 140,
    revLimitRpm: 9200,
    reciprocatingMassKg: 0.52,
    overRevBands: [
      { id: 'C', label: 'Teardown', minRpm: 9900 },
      { id: 'A', label: 'Logged', minRpm: 9300 },
      { id: 'B', label: 'Inspect valve train', minRpm: 9500 },
    ],
  }

  it('lists the rev limit first, then the bands by threshold, each with its force (hand-computed, m a w^2 (1 + 1/R))', () => {
    const rows = inertiaForceTable(type)!
    expect(rows.map((r) => [r.bandId, r.label, r.rpm])).toEqual([
      [null, 'Rev limit', 9200],
      ['A', 'Logged', 9300],
      ['B', 'Inspect valve train', 9500],
      ['C', 'Teardown', 9900],
    ])
    // 0.52 x 0.0405 x (2 pi N / 60)^2 x 1.289286 at N = 9,200 / 9,300 / 9,500 / 9,900 rpm
    const expected = [25202.31, 25753.17, 26872.74, 29183.35]
    rows.forEach((r, i) => expectRel(r.tdcN, expected[i]!, 1e-6))
  })

  it('is on the sheet, and empty without a mass', () => {
    const sheet = engineTypeSheet({ cylinders: 8, boreMm: 94, ...type })
    expect(sheet.inertiaForces?.map((r) => r.rpm)).toEqual([9200, 9300, 9500, 9900])
    expectRel(sheet.inertiaForces![3]!.tdcN, 29183.35, 1e-6)
    expectRel(sheet.inertiaForceTdcAtLimit!, 25202.31, 1e-6)
    expect(inertiaForceTable({ ...type, reciprocatingMassKg: null })).toBeNull()
    expect(inertiaForceTable({ ...type, overRevBands: undefined })).toHaveLength(1)
  })
})
