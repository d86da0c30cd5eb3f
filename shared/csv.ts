/**
 * The one way Crankledger writes CSV (every export goes through `toCsv`), safe to open in a
 * spreadsheet (OWASP "CSV Injection").
 *
 * The rule, cell by cell:
 * - A number (a JS number) is written as it is, so a negative number stays a number.
 * - Text that is wholly a plain decimal number ("-12.5", "+3", "1e-3") is also written as it is: a
 *   spreadsheet reads it as that number and nothing else.
 * - Any other text starting with =, +, -, @, a tab or a carriage return (after leading spaces,
 *   which spreadsheets skip) gets a leading apostrophe, so it is shown as text and never evaluated
 *   as a formula ("=cmd|x!A1" is written as "'=cmd|x!A1").
 * - Cells are quoted when they hold a comma, a quote, a line break or leading or trailing spaces;
 *   quotes inside are doubled (RFC 4180). Lines end with CRLF.
 * - null and undefined are empty cells; booleans are written as "yes" / "no".
 */

const FORMULA_START = /^[\s]*[=+\-@\t\r]/
const PLAIN_NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/

export type CsvValue = string | number | boolean | null | undefined

/** A cell's text with formula triggers neutralised (before quoting). */
export function neutraliseCell(value: CsvValue): string {
  if (value === null || value === undefined) return ''
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : ''
  if (typeof value === 'boolean') return value ? 'yes' : 'no'
  const text = String(value)
  if (PLAIN_NUMBER.test(text)) return text
  return FORMULA_START.test(text) ? `'${text}` : text
}

/** One cell as written in the file: neutralised, then quoted where needed. */
export function csvCell(value: CsvValue): string {
  const text = neutraliseCell(value)
  return /[",\r\n]|^\s|\s$/.test(text) ? `"${text.replace(/"/g, '""')}"` : text
}

/** A whole file: a header row from `columns`, then one row per record. */
export function toCsv<T extends Record<string, CsvValue>>(rows: readonly T[], columns: readonly (keyof T & string)[]): string {
  const lines = [columns.map(csvCell).join(',')]
  for (const row of rows) lines.push(columns.map((c) => csvCell(row[c])).join(','))
  return `${lines.join('\r\n')}\r\n`
}
