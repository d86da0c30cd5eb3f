// Finding the channel names in a logger export (for the browser preview) and reading its metadata lines.
import { describe, expect, it } from 'vitest'
import { detectLayout, preambleEntries, preambleStart, unitFromCell, unitsFromRow } from '../../shared/domain/logger-layout'

describe('detectLayout', () => {
  it('a plain file: names on line 1', () => {
    const l = detectLayout(['time,rpm,speed', '0.00,6000,100', '0.01,6000,100'], ',')
    expect(l).toEqual({ headerLine: 1, unitsRow: false, preamble: [], header: ['time', 'rpm', 'speed'], units: null, firstDataLine: 2 })
  })

  it('metadata lines, then names, a units row and data (tab, quoted names, decimal commas)', () => {
    const lines = ['Format\tgeneric export', 'Vehicle\tcar 7', '', 'Date\t17.05.2031', '"Time"\t"Engine RPM"\t"Oil P"', 's\trpm\tbar', '0,00\t6000\t4,5', '0,01\t6000\t4,5']
    const l = detectLayout(lines, '\t')!
    expect(l.headerLine).toBe(5)
    expect(l.unitsRow).toBe(true)
    expect(l.header).toEqual(['Time', 'Engine RPM', 'Oil P'])
    expect(l.units).toEqual(['s', 'rpm', 'bar'])
    expect(l.preamble).toEqual(['Format\tgeneric export', 'Vehicle\tcar 7', 'Date\t17.05.2031'])
    expect(l.firstDataLine).toBe(7)
  })

  it('a metadata line as wide as the data is not taken for the names when numbers follow the real ones', () => {
    const lines = ['Session,Practice 2,x', 'Time,RPM,Speed', '0,6000,100', '0.01,6000,100']
    expect(detectLayout(lines, ',')!.headerLine).toBe(2)
  })

  it('a metadata line holding a time under one holding a date is not taken for data', () => {
    const lines = ['Format\tgeneric export', 'Date\t2026-11-21', 'Time\t14:02:10', 'Time\tEngine RPM\tSpeed', 'ms\trpm\tmph', '0\t6000\t100', '10\t6000\t100', '20\t6000\t100', '']
    const l = detectLayout(lines, '\t')!
    expect(l.headerLine).toBe(4)
    expect(l.unitsRow).toBe(true)
  })

  it('no rows of numbers: nothing found', () => {
    expect(detectLayout(['just text', 'more text'], ',')).toBeNull()
  })
})

describe('units row cells', () => {
  it('reads the units of common practice, brackets and case aside', () => {
    expect(unitFromCell('speed', '[mph]')).toBe('mph')
    expect(unitFromCell('speed', 'km/h')).toBe('kmh')
    expect(unitFromCell('oilTemp', '°F')).toBe('F')
    expect(unitFromCell('oilTemp', '(degC)')).toBe('C')
    expect(unitFromCell('oilPressure', 'kPa')).toBe('kPa')
    expect(unitFromCell('time', 'ms')).toBe('ms')
    expect(unitFromCell('time', 'sec')).toBe('seconds')
    expect(unitFromCell('time', ' ')).toBe('')
    expect(unitFromCell('oilPressure', 'atm')).toBeNull()
  })

  it('the mapping keeps a unit whose cell is blank; the first unknown unit is named', () => {
    const base = { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' } as const
    expect(unitsFromRow(base, { time: 'ms', speed: '', oilPressure: 'psi' })).toEqual({ units: { time: 'ms', speed: 'kmh', temperature: 'C', pressure: 'psi' }, unknown: null })
    expect(unitsFromRow(base, { speed: 'knots' }).unknown).toEqual({ channel: 'speed', cell: 'knots' })
  })
})

describe('metadata lines', () => {
  it('splits key and value at the delimiter, a colon or an equals sign', () => {
    expect(preambleEntries(['Vehicle,car 7', 'Venue: Hollow Ridge', 'Rate=100 Hz', 'free text'], ',')).toEqual([
      { key: 'Vehicle', value: 'car 7' },
      { key: 'Venue', value: 'Hollow Ridge' },
      { key: 'Rate', value: '100 Hz' },
      { key: '', value: 'free text' },
    ])
  })

  it('offers the logger\'s own start: a date and a time under their keys, or one date-time', () => {
    expect(preambleStart(preambleEntries(['Date: 2031-05-17', 'Time: 14:02:10'], ','))).toBe('2031-05-17T14:02:10.000Z')
    expect(preambleStart(preambleEntries(['Date;17.05.2031', 'Start time;9:05'], ';'))).toBe('2031-05-17T09:05:00.000Z')
    expect(preambleStart(preambleEntries(['Recorded: 2031-05-17 14:02:10'], ','))).toBe('2031-05-17T14:02:10.000Z')
    expect(preambleStart(preambleEntries(['Vehicle: car 7'], ','))).toBeNull()
  })
})
