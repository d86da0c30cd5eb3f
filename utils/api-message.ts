/** The server's own message for a failed request (a 4xx names the field), else the fallback. */
export function apiMessage(e: unknown, fallback: string): string {
  const message = (e as { data?: { message?: unknown } } | null)?.data?.message
  return typeof message === 'string' && message ? message : fallback
}
