import { describe, expect, it } from 'vitest'
import { parse as csvParse } from 'csv-parse/sync'
import Papa from 'papaparse'
import { applyMapping, fnv1a32, guessMapping, headerSignature, mappingProblems } from '../../shared/domain/oil/lab-csv'

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
