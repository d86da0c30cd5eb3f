// MariaDB values to JavaScript at the repository boundary: DECIMAL arrives as a string, JSON
// columns may arrive parsed or not, DATETIME as a Date. Pure, so the server and the seeds share it.

/** MariaDB DECIMAL arrives as a string: convert at the repository boundary. */
export function num(v: unknown): number {
  return v === null || v === undefined ? 0 : Number(v)
}
export function numOrNull(v: unknown): number | null {
  return v === null || v === undefined ? null : Number(v)
}
export function json<T>(v: unknown, fallback: T): T {
  if (v === null || v === undefined) return fallback
  // mysql2 may hand JSON columns over parsed already; a parsed JSON string stays a string.
  if (typeof v === 'string') {
    try {
      return JSON.parse(v) as T
    } catch {
      return v as T
    }
  }
  return v as T
}
export function iso(v: unknown): string | null {
  if (v === null || v === undefined) return null
  return (v instanceof Date ? v : new Date(String(v))).toISOString()
}
