import { describe, expect, it } from 'vitest'
import { basquin, minerSum, SN_BELOW_RANGE_TEXT, snAnswerText, type SnAnswer } from '../../shared/domain/fatigue'
import * as life from '../../shared/domain/life'

function expectRel(actual: number, expected: number, rel: number) {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * rel)
}

/** The figure of an answer that must be on the line; fails the test when it is not. */
function value(answer: SnAnswer): number {
  if (!answer.valid) throw new Error(`expected a figure, got: ${answer.message}`)
  return answer.value
}

const OUTSIDE = { valid: false, reason: 'below-line-range', message: 'outside the S-N line\'s range (below 10³ cycles)' }

describe('Basquin S-N line (Budynas and Nisbett, Shigley\'s Mechanical Engineering Design, 9th ed., ch. 6, as reproduced)', () => {
  it('Example 6-2: Sut 90, f 0.86, Se 45 kpsi: a = 133.1, b = -0.0785, Sf(1e4) = 64.6, N(55) = 77,500 (0.3 %)', () => {
    const sn = basquin(90, 45, 0.86)
    expect(sn.a).toBeCloseTo(133.1, 1)
    expect(sn.b).toBeCloseTo(-0.0785, 4)
    expect(value(sn.stressAtCycles(1e4))).toBeCloseTo(64.6, 1)
    expectRel(value(sn.cyclesAtStress(55)), 77500, 3e-3)
    expectRel(value(sn.cyclesAtStress(55)), 77614, 1e-4) // exact arithmetic
  })

  it('Miner example, section 6-15: Sut 80, Se 40, f 0.9: a = 129.6, b = -0.085091, N1(60) = 8,520, n2 = 0.648e6 (0.2 %)', () => {
    const sn = basquin(80, 40, 0.9)
    expect(sn.a).toBeCloseTo(129.6, 9)
    expect(sn.b).toBeCloseTo(-0.085091, 6)
    const N1 = value(sn.cyclesAtStress(60))
    expectRel(N1, 8520, 3e-3)
    const N2 = value(sn.cyclesAtStress(40)) // exactly at Se: the line gives 1e6, the cut-off applies only below Se
    expectRel(N2, 1e6, 1e-9)
    const n1 = 3000
    // remaining life after n1 cycles at 60 kpsi: Miner sum of 1 -> n2 = (1 - n1/N1) N2
    const n2 = ((N1 - n1) * N2) / N1
    expectRel(n2, 0.648e6, 2e-3)
    expectRel(n2, 647977, 1e-5)
    expect(minerSum([{ cycles: n1, cyclesToFailure: N1 }, { cycles: n2, cyclesToFailure: N2 }])).toBeCloseTo(1, 12)
  })

  it('the line passes through (1e3, f Sut) and (1e6, Se), both ends inside its range', () => {
    const sn = basquin(80, 40, 0.9)
    expect(value(sn.stressAtCycles(1e3))).toBeCloseTo(72, 9)
    expect(value(sn.stressAtCycles(1e6))).toBeCloseTo(40, 9)
    expectRel(value(sn.cyclesAtStress(72)), 1e3, 1e-9)
  })

  it('Shigley\'s endurance cut-off is used by default: below Se the life is infinite; it can be switched off', () => {
    expect(basquin(80, 40, 0.9).cyclesAtStress(39.9)).toEqual({ valid: true, value: Infinity })
    const noCutoff = value(basquin(80, 40, 0.9, { enduranceCutoff: false }).cyclesAtStress(39.9))
    expect(Number.isFinite(noCutoff)).toBe(true)
    expect(noCutoff).toBeGreaterThan(1e6)
  })

  it('with the cut-off the strength from 1e6 cycles on is Se; without it the line goes on: Se 10^b = 40 x 10^-0.085091 = 32.883 kpsi at 1e7', () => {
    expect(basquin(80, 40, 0.9).stressAtCycles(1e7)).toEqual({ valid: true, value: 40 })
    // hand-computed: one decade past the knee lowers the strength by the factor 10^b
    expect(value(basquin(80, 40, 0.9, { enduranceCutoff: false }).stressAtCycles(1e7))).toBeCloseTo(32.883, 3)
  })
})

describe('below 10^3 cycles the S-N line gives no figure (Shigley fits it from 10^3 to 10^6 cycles)', () => {
  it('N = 500 cycles is outside the line\'s range, not a number', () => {
    expect(basquin(90, 45, 0.86).stressAtCycles(500)).toEqual(OUTSIDE)
    expect(basquin(80, 40, 0.9, { enduranceCutoff: false }).stressAtCycles(500)).toEqual(OUTSIDE)
    expect(basquin(80, 40, 0.9).stressAtCycles(0)).toEqual(OUTSIDE)
    expect(basquin(80, 40, 0.9).stressAtCycles(999.9)).toEqual(OUTSIDE)
  })

  it('a stress above f Sut (the 10^3-cycle strength) is outside too: 75 kpsi on the 80 / 40 / 0.9 line would read 619 cycles', () => {
    // Hand-computed: (75 / 129.6)^(1 / -0.085091) = 619 cycles, below where the line was fitted.
    expect(basquin(80, 40, 0.9).cyclesAtStress(75)).toEqual(OUTSIDE)
    expect(basquin(90, 45, 0.86).cyclesAtStress(80)).toEqual(OUTSIDE) // f Sut = 77.4 kpsi
  })

  it('prints the sentence in place of a figure, and the figure when there is one', () => {
    const fmt = (v: number) => `${v.toFixed(1)} kpsi`
    expect(snAnswerText(basquin(80, 40, 0.9).stressAtCycles(500), fmt)).toBe('outside the S-N line\'s range (below 10³ cycles)')
    expect(SN_BELOW_RANGE_TEXT).toBe('outside the S-N line\'s range (below 10³ cycles)')
    expect(snAnswerText(basquin(80, 40, 0.9).stressAtCycles(1e3), fmt)).toBe('72.0 kpsi')
  })

  it('refuses inputs that are no stress or cycle count, and a line that does not fall', () => {
    const sn = basquin(80, 40, 0.9)
    expect(() => sn.stressAtCycles(Number.NaN)).toThrow(RangeError)
    expect(() => sn.stressAtCycles(-1)).toThrow(RangeError)
    expect(() => sn.cyclesAtStress(-1)).toThrow(RangeError)
    expect(() => basquin(80, 0, 0.9)).toThrow(RangeError)
    expect(() => basquin(80, 80, 0.9)).toThrow(/f Sut must be above Se/)
  })
})

describe('the life module re-exports the fatigue functions', () => {
  it('is the same basquin and minerSum', () => {
    expect(life.basquin).toBe(basquin)
    expect(life.minerSum).toBe(minerSum)
  })
})
