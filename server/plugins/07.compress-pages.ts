import { gzipSync } from 'node:zlib'

// Rendered pages go out gzip-compressed to browsers that accept it: on a slow link most of a
// page such as the board is its inline payload, which compresses to a fraction. Static files
// are compressed at build time (nitro.compressPublicAssets). Registered after the CSP plugin,
// whose hashes are taken from the uncompressed text.
const SMALLEST = 1024

export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('render:response', (response, { event }) => {
    if (typeof response.body !== 'string' || response.body.length < SMALLEST) return
    if (!/\bgzip\b/.test(getRequestHeader(event, 'accept-encoding') ?? '')) return
    const headers = (response.headers ?? {}) as Record<string, string>
    if (headers['content-encoding']) return
    response.body = gzipSync(response.body) as unknown as string
    response.headers = { ...headers, 'content-encoding': 'gzip', vary: 'accept-encoding' }
  })
})
