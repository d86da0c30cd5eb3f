// The one CSV writer (shared/csv.ts): formula triggers neutralised (OWASP "CSV Injection"),
// numbers kept numbers, and what it writes read back the same by a general-purpose CSV parser.
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { parse } from 'csv-parse/sync'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { csvCell, neutraliseCell, toCsv } from '../../shared/csv'

describe('neutralising cells', () => {
  it.each([
    ['=cmd|x!A1', "'=cmd|x!A1"],
    ['=HYPERLINK("http://x.example","y")', '\'=HYPERLINK("http://x.example","y")'],
    ['+1+2', "'+1+2"],
    ['-2+3', "'-2+3"],
    ['@SUM(A1:A2)', "'@SUM(A1:A2)"],
    ['\t=1', "'\t=1"],
    ['\r=1', "'\r=1"],
    ['  =1', "'  =1"],
    ['-', "'-"],
    ['KV8-1101', 'KV8-1101'],
    ['a=b', 'a=b'],
    ['', ''],
  ])('%j is written as %j', (input, output) => {
    expect(neutraliseCell(input)).toBe(output)
  })

  it('keeps numbers numbers: JS numbers and text that is wholly a decimal number', () => {
    expect(neutraliseCell(-12.5)).toBe('-12.5')
    expect(neutraliseCell(0)).toBe('0')
    expect(neutraliseCell('-12.5')).toBe('-12.5')
    expect(neutraliseCell('+3')).toBe('+3')
    expect(neutraliseCell('-1e-3')).toBe('-1e-3')
    expect(neutraliseCell('-.5')).toBe('-.5')
    expect(neutraliseCell(Number.NaN)).toBe('')
    expect(neutraliseCell(null)).toBe('')
    expect(neutraliseCell(undefined)).toBe('')
    expect(neutraliseCell(true)).toBe('yes')
    // but not text that only starts like one
    expect(neutraliseCell('-12.5+A1')).toBe("'-12.5+A1")
    expect(neutraliseCell('-0x1F')).toBe("'-0x1F")
  })

  it('quotes where RFC 4180 needs it', () => {
    expect(csvCell('a,b')).toBe('"a,b"')
    expect(csvCell('say "hi"')).toBe('"say ""hi"""')
    expect(csvCell('two\nlines')).toBe('"two\nlines"')
    expect(csvCell(' padded ')).toBe('" padded "')
    expect(csvCell('\t=1')).toBe("'\t=1")
    expect(csvCell('=1,2')).toBe('"\'=1,2"')
  })
})

describe('a whole file read back by csv-parse', () => {
  it('gives every cell back, formula triggers behind an apostrophe and numbers as written', () => {
    const rows = [
      { serial: 'KV8-1101', chassis: '=cmd|x!A1', hours: -3.25, note: 'line one\r\nline two, "quoted"' },
      { serial: '@evil', chassis: null, hours: '-0.5', note: '+SUM(1)' },
    ]
    const text = toCsv(rows, ['serial', 'chassis', 'hours', 'note'])
    expect(text.endsWith('\r\n')).toBe(true)
    const back = parse(text, { columns: true }) as Record<string, string>[]
    expect(back).toEqual([
      { serial: 'KV8-1101', chassis: "'=cmd|x!A1", hours: '-3.25', note: 'line one\r\nline two, "quoted"' },
      { serial: "'@evil", chassis: '', hours: '-0.5', note: "'+SUM(1)" },
    ])
    expect(Number(back[0]!.hours)).toBe(-3.25)
  })

  it('for any text: the parser reads back the text (with an apostrophe before a trigger), and no cell starts with a trigger unless it is a number', () => {
    fc.assert(
      fc.property(fc.array(fc.array(fc.oneof(fc.string(), fc.double({ noNaN: true, noDefaultInfinity: true }), fc.constantFrom('=1', '-1', '+x', '@a', '\tb', '\rc')), { minLength: 2, maxLength: 2 }), { minLength: 1, maxLength: 8 }), (table) => {
        const rows = table.map(([a, b]) => ({ a, b }))
        const back = parse(toCsv(rows, ['a', 'b']), { columns: true, relax_column_count: false }) as Record<string, string>[]
        expect(back).toHaveLength(rows.length)
        rows.forEach((r, i) => {
          for (const k of ['a', 'b'] as const) {
            const got = back[i]![k]!
            expect(got).toBe(neutraliseCell(r[k]))
            if (/^\s*[=+\-@\t\r]/.test(got)) expect(Number.isFinite(Number(got)), JSON.stringify(got)).toBe(true)
          }
        })
      }),
      { numRuns: 300 },
    )
  })
})

describe('every export goes through the one writer', () => {
  const root = join(__dirname, '../..')
  const files: string[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = join(dir, name)
      if (statSync(full).isDirectory()) walk(full)
      else if (/\.(ts|vue)$/.test(name)) files.push(full)
    }
  }
  for (const dir of ['pages', 'components', 'composables', 'stores', 'utils', 'server', 'layouts', 'tasks']) walk(join(root, dir))

  it('no file writes CSV or a spreadsheet any other way', () => {
    const offenders = files.filter((f) => {
      const text = readFileSync(f, 'utf8')
      const writesCsv = /unparse\(|new Blob\([^)]*text\/csv|setResponseHeader[^\n]*text\/csv|content-disposition[^\n]*\.csv|\.xlsx|spreadsheetml/i.test(text)
      return writesCsv && !/\btoCsv\(/.test(text)
    })
    expect(offenders.map((f) => relative(root, f))).toEqual([])
  })

  it('the board export uses it', () => {
    expect(readFileSync(join(root, 'pages/index.vue'), 'utf8')).toMatch(/toCsv\(rows, BOARD_CSV_COLUMNS\)/)
  })
})
