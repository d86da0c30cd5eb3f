import { describe, expect, it } from 'vitest'
import { mergeSerialLimits, suggestRemovalState, withSerialLimits } from '../../shared/domain/part-state'
import type { ComponentLimits } from '../../shared/domain/life'

const TYPE: ComponentLimits = { hours: 39.15, km: null, eqHours: 36.54, overRevEvents: { B: 6, C: 1 }, immediateInspectionBand: 'C', warningLevel: 0.8, dueLevel: 0.9, damageExponent: 13 }
const CLEAN = { findingDisposition: null, engineInspectionOpen: false, partInspectionOpen: false, fraction: 0.42 }

// Common practice: a part that saw an over-rev not yet inspected, or reached a limit, is held for inspection.
describe('the state offered for a removed part', () => {
  it('is serviceable with nothing against it', () => {
    expect(suggestRemovalState(CLEAN)).toEqual({ state: 'serviceable', reasons: [] })
  })
  it('is quarantined after an over-rev on the part or on the engine, or at a limit', () => {
    expect(suggestRemovalState({ ...CLEAN, partInspectionOpen: true, engineInspectionOpen: true })).toEqual({ state: 'quarantined', reasons: ['an over-rev calls for inspection of this part'] })
    expect(suggestRemovalState({ ...CLEAN, engineInspectionOpen: true }).state).toBe('quarantined')
    expect(suggestRemovalState({ ...CLEAN, fraction: 1 })).toEqual({ state: 'quarantined', reasons: ['the part is at 100 % of a limit'] })
    expect(suggestRemovalState({ ...CLEAN, fraction: 3 }).reasons).toEqual(['the part is at 300 % of a limit'])
    expect(suggestRemovalState({ ...CLEAN, fraction: 0.999 }).state).toBe('serviceable')
  })
  it('follows a finding that holds or scraps the part', () => {
    expect(suggestRemovalState({ ...CLEAN, findingDisposition: 'send-to-lab' }).state).toBe('quarantined')
    expect(suggestRemovalState({ ...CLEAN, findingDisposition: 'scrap', fraction: 2 })).toEqual({ state: 'scrapped', reasons: ['the teardown finding says scrap'] })
    expect(suggestRemovalState({ ...CLEAN, findingDisposition: 'refit' }).state).toBe('serviceable')
  })
})

describe('limits for one serial', () => {
  it('replace the type limit field by field and band by band', () => {
    const l = withSerialLimits(TYPE, { eqHours: 50, overRevEvents: { C: 2 } })
    expect([l.hours, l.km, l.eqHours, l.overRevEvents]).toEqual([39.15, null, 50, { B: 6, C: 2 }])
    expect(withSerialLimits(TYPE, null)).toBe(TYPE)
  })
  it('keep earlier concessions\' limits that a later one does not name', () => {
    const first = mergeSerialLimits(null, { hours: 45, overRevEvents: { C: 2 } })
    expect(mergeSerialLimits(first, { overRevEvents: { B: 8 } })).toEqual({ hours: 45, overRevEvents: { C: 2, B: 8 } })
  })
})
