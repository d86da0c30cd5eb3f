// A preview's token: what it previewed (target, change, the fingerprint of the data it read, its
// summary), signed with the server's session secret so that a save can trust the summary it audits
// and no instance has to remember previews.
import { createHmac, timingSafeEqual } from 'node:crypto'

function secret(): string {
  return String(useRuntimeConfig().session?.password ?? '')
}

function mac(body: string): string {
  return createHmac('sha256', secret()).update(body).digest('base64url')
}

export function signPreviewToken(payload: unknown): string {
  const body = Buffer.from(JSON.stringify(payload)).toString('base64url')
  return `${body}.${mac(body)}`
}

/** The payload, or null when the token was not signed here or was altered. */
export function readPreviewToken<T>(token: string): T | null {
  const [body, sig] = token.split('.')
  if (!body || !sig) return null
  const expected = Buffer.from(mac(body))
  const given = Buffer.from(sig)
  if (expected.length !== given.length || !timingSafeEqual(expected, given)) return null
  try {
    return JSON.parse(Buffer.from(body, 'base64url').toString('utf8')) as T
  } catch {
    return null
  }
}
