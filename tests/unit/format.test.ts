// The board's one-line forecast: which reason wins and what it says. Cases built here.
import { describe, expect, it } from 'vitest'
import { engineForecastText } from '../../utils/format'

const next = (over: Partial<{ ok: boolean; reason: 'already-over' | 'incomplete-build' | 'inspection' | 'projected-over' | 'no-projection' | null }> = {}) => ({
  name: 'Tarnfield 6 Hours',
  ok: true,
  reason: null,
  chassis: null,
  ...over,
})

describe('engineForecastText', () => {
  it('an engine fit for its next event says so, in the tone of its worst part', () => {
    expect(engineForecastText({ worst: { status: 'ok' }, nextEvent: next(), warningAt: null, limitAt: null })).toEqual({ main: 'Will finish Tarnfield 6 Hours', sub: '', tone: 'ok' })
    expect(engineForecastText({ worst: { status: 'warning' }, nextEvent: next(), warningAt: { name: 'Saltmarsh 12 Hours' }, limitAt: null }).sub).toBe('Plan rebuild from Saltmarsh 12 Hours')
  })

  it('an incomplete build must not run, whatever its parts\' life', () => {
    expect(engineForecastText({ worst: { status: 'ok' }, nextEvent: next({ ok: false, reason: 'incomplete-build' }), warningAt: null, limitAt: null })).toEqual({
      main: 'Build incomplete',
      sub: 'A position has no part fitted: must not run',
      tone: 'over',
    })
  })

  it('a part over its limit reads first', () => {
    expect(engineForecastText({ worst: { status: 'over' }, nextEvent: next({ ok: false, reason: 'already-over' }), warningAt: null, limitAt: null }).main).toBe('Must not run')
  })
})
