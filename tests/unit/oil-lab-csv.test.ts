import { describe, expect, it } from 'vitest'
import { parse as csvParse } from 'csv-parse/sync'
import Papa from 'papaparse'
import { applyMapping, countsPerMl, fnv1a32, guessMapping, headerSignature, mappingProblems } from '../../shared/domain/oil/lab-csv'
import { iso4406 } from '../../shared/domain/oil/iso4406'
import { oilSampleSchema } from '../../shared/domain/oil/schema'

describe('fnv1a32', () => {
  // Test vectors of the FNV reference (Fowler, Noll, Vo), from memory; checked by hand in Python too.
  it.each([['', '811c9dc5'], ['a', 'e40c292c'], ['foobar', 'bf9cf968']])('hashes %j to %s', (text, hex) => {
    expect(fnv1a32(text)).toBe(hex)
  })
})

describe('headerSignature', () => {
  it('ignores case, spacing, separators and column order', () => {
    expect(headerSignature(['Sample ID', 'Fe ppm', 'Date'])).toBe(headerSignature(['date', 'sample_id', ' FE  PPM ']))
  })
  it('differs for a different set of columns', () => {
    expect(headerSignature(['Sample ID', 'Fe ppm'])).not.toBe(headerSignature(['Sample ID', 'Cu ppm']))
    expect(headerSignature(['a', 'b']).startsWith('2-')).toBe(true)
  })
})

const HEADERS = ['Unit ID', 'Sample No', 'Date Sampled', 'Unit Hours', 'Oil Hours', 'Fe ppm', 'Cu', 'Visc 40C', 'Visc 100C', 'Remarks']

describe('guessMapping', () => {
  it('maps common lab column names and ignores the rest', () => {
    expect(guessMapping(HEADERS)).toEqual({
      'Unit ID': 'engineSerial', 'Sample No': 'sampleId', 'Date Sampled': 'sampledAt', 'Unit Hours': 'engineHours', 'Oil Hours': 'oilHours',
      'Fe ppm': 'Fe', 'Cu': 'Cu', 'Visc 40C': 'kv40', 'Visc 100C': 'kv100', 'Remarks': 'ignore',
    })
  })
  it('maps an HTHS column', () => {
    expect(guessMapping(['HTHS 150C', 'HTHS'])).toEqual({ 'HTHS 150C': 'hths', 'HTHS': 'ignore' })
    expect(guessMapping(['hths_viscosity'])).toEqual({ hths_viscosity: 'hths' })
  })
  it('maps a field only once', () => {
    expect(guessMapping(['Fe', 'Fe ppm'])).toEqual({ 'Fe': 'Fe', 'Fe ppm': 'ignore' })
  })
})

describe('mappingProblems', () => {
  it('accepts a complete mapping', () => {
    expect(mappingProblems(HEADERS, guessMapping(HEADERS))).toEqual([])
  })
  it('names missing required fields, unknown columns and fields mapped twice', () => {
    const problems = mappingProblems(['A', 'B'], { A: 'Fe', B: 'Fe', C: 'sampleId' })
    expect(problems).toEqual([
      'mapping: Fe is mapped from both "A" and "B"',
      'mapping: column "C" is not in the file',
      'mapping: no column is mapped to engineSerial',
      'mapping: no column is mapped to sampledAt',
    ])
  })
})

describe('applyMapping', () => {
  const csv = 'Unit ID,Sample No,Date Sampled,Fe ppm,Remarks\nKV8-1101,"Q-1",2026-06-01, 12.5 ,"fine, no comment"\n'
  it('reads the mapped cells of a row the same way from papaparse and csv-parse', () => {
    const fromPapa = Papa.parse<string[]>(csv, { header: false, skipEmptyLines: 'greedy' }).data
    const fromCsvParse = csvParse(csv, { skip_empty_lines: true }) as string[][]
    expect(fromPapa).toEqual(fromCsvParse)
    const [headers, row] = fromPapa as [string[], string[]]
    expect(applyMapping(headers, row, guessMapping(headers))).toEqual({ engineSerial: 'KV8-1101', sampleId: 'Q-1', sampledAt: '2026-06-01', Fe: '12.5' })
  })
})

describe('particle counts: the volume basis of the lab file', () => {
  const headers = ['Unit ID', 'Sample No', 'Date Sampled', '>4 um', '>6 um', '>14 um']
  const mapping = guessMapping(headers)
  const codeOf = (cells: string[], basis: 'per_ml' | 'per_100ml') => {
    const record = countsPerMl(applyMapping(headers, cells, mapping), basis)
    const s = oilSampleSchema({ now: new Date('2026-06-02T00:00:00Z'), builtAt: null }).parse(record)
    return { counts: [s.p4, s.p6, s.p14], code: iso4406(s) }
  }

  it('300,000 / 50,000 / 700 per 100 mL gives 19/16/10, as 3,000 / 500 / 7 per mL does (ISO 4406:1999 worked example, as reproduced)', () => {
    const per100 = codeOf(['KV8-1101', 'Q-1', '2026-06-01', '300000', '50000', '700'], 'per_100ml')
    const perMl = codeOf(['KV8-1101', 'Q-2', '2026-06-01', '3000', '500', '7'], 'per_ml')
    expect(per100).toEqual({ counts: [3000, 500, 7], code: '19/16/10' })
    expect(perMl).toEqual(per100)
  })

  it('the same per 100 mL counts read as per mL would be six or seven scale numbers dirtier (table: 300,000 is 25, 50,000 is 23, 700 is 17)', () => {
    expect(codeOf(['KV8-1101', 'Q-3', '2026-06-01', '300000', '50000', '700'], 'per_ml').code).toBe('25/23/17')
  })

  it('near a rounded bound of the table: 130,500 per 100 mL is 1,305 per mL, code 18; 130,000 is 1,300, code 17 (ISO 4406 table, as reproduced)', () => {
    expect(codeOf(['E', 'Q-4', '2026-06-01', '130500', '130000', '1000'], 'per_100ml')).toEqual({ counts: [1305, 1300, 10], code: '18/17/10' })
  })

  it('leaves blank and unreadable cells for the sample schema to name, and per mL untouched', () => {
    expect(countsPerMl({ p4: '', p6: 'n/a', p14: '-5', Fe: '12' }, 'per_100ml')).toEqual({ p4: '', p6: 'n/a', p14: '-5', Fe: '12' })
    expect(countsPerMl({ p4: '250', Fe: '12' }, 'per_100ml')).toEqual({ p4: '2.5', Fe: '12' })
    const same = { p4: '250' }
    expect(countsPerMl(same, 'per_ml')).toBe(same)
  })
})
