import type { H3Event } from 'h3'

// Response headers for every page and API answer, and the cross-site refusal for state-changing
// requests (SameSite=Lax cookies plus an Origin / Sec-Fetch-Site check).
const API_CSP = "default-src 'none'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'"
const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])

export default defineEventHandler((event) => {
  const headers = {
    'x-content-type-options': 'nosniff',
    'referrer-policy': 'same-origin',
    'x-frame-options': 'DENY',
    'cross-origin-opener-policy': 'same-origin',
    'cross-origin-resource-policy': 'same-origin',
    'permissions-policy': 'camera=(self), microphone=(), geolocation=(), payment=()',
  }
  setResponseHeaders(event, headers)
  // Pages get a policy with hashes of their inline scripts (see server/plugins/02.csp.ts); everything else this one.
  if (!getResponseHeader(event, 'content-security-policy')) setResponseHeader(event, 'content-security-policy', API_CSP)

  if (STATE_CHANGING.has(event.method) && event.path.startsWith('/api/')) {
    const site = getRequestHeader(event, 'sec-fetch-site')
    if (site && site !== 'same-origin' && site !== 'none') refuseCrossSite(site)
    const origin = getRequestHeader(event, 'origin')
    if (origin && !sameOrigin(origin, event)) refuseCrossSite(origin)
  }
})

function sameOrigin(origin: string, event: H3Event) {
  try {
    const o = new URL(origin)
    // X-Forwarded-Host counts only when a proxy is configured as trusted (runtimeConfig trustedProxy).
    if (o.host === requestHost(event)) return true
    return o.origin === new URL(useRuntimeConfig().publicUrl).origin
  } catch {
    return false
  }
}

function refuseCrossSite(from: string): never {
  throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: `Cross-site request refused (${from.slice(0, 80)})` })
}
