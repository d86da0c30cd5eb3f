import type { H3Event } from 'h3'
import { toCsv, type CsvValue } from '#shared/csv'

export interface CsvTable<T extends Record<string, CsvValue>> {
  fileName: string
  rows: readonly T[]
  columns: readonly (keyof T & string)[]
}

/** A CSV download: written by toCsv (formula-safe), never cached, named for the browser's save dialog. */
export function csvAnswer<T extends Record<string, CsvValue>>(event: H3Event, table: CsvTable<T>): string {
  const fileName = table.fileName.replace(/[^\w.-]+/g, '_')
  setResponseHeaders(event, { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${fileName}"`, 'cache-control': 'private, no-store' })
  return toCsv(table.rows, table.columns)
}
