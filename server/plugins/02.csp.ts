import { createHash } from 'node:crypto'

// A Content-Security-Policy that allows only the app's own origin. Nuxt writes a few inline
// scripts into each page (its config and payload); they are allowed by their SHA-256 hash, not
// by 'unsafe-inline'. Styles stay 'unsafe-inline' because the chart library sets style attributes.
const INLINE_SCRIPT = /<script(?![^>]*\bsrc=)(?![^>]*type="application\/json")[^>]*>([\s\S]*?)<\/script>/g

export default defineNitroPlugin((nitroApp) => {
  // Whatever else sets it (payload, island and error answers), the last word before sending.
  nitroApp.hooks.hook('beforeResponse', (event) => {
    removeResponseHeader(event, 'x-powered-by')
  })
  nitroApp.hooks.hook('render:response', (response) => {
    const html = typeof response.body === 'string' ? response.body : ''
    const hashes = new Set<string>()
    for (const m of html.matchAll(INLINE_SCRIPT)) {
      if (m[1]) hashes.add(`'sha256-${createHash('sha256').update(m[1]).digest('base64')}'`)
    }
    // Nuxt's renderer names itself in x-powered-by: not sent.
    const { 'x-powered-by': _poweredBy, ...headers } = (response.headers ?? {}) as Record<string, string>
    response.headers = {
      ...headers,
      'content-security-policy': [
        "default-src 'self'",
        `script-src 'self' ${[...hashes].join(' ')}`.trim(),
        "style-src 'self' 'unsafe-inline'",
        "img-src 'self' data: blob:",
        "font-src 'self' data:",
        "connect-src 'self'",
        "object-src 'none'",
        "base-uri 'self'",
        "form-action 'self'",
        "frame-ancestors 'none'",
      ].join('; '),
    }
  })
})
