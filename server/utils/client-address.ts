import { isIP } from 'node:net'
import type { H3Event } from 'h3'

/**
 * The client's address and the host it asked for, with the reverse proxy stated explicitly
 * (runtimeConfig `trustedProxy`, see README "Security"). With no proxy configured (hops 0, the
 * default) forwarded headers are ignored: the address is the connection's peer and the host is
 * the Host header, so nobody can pick their own address by sending X-Forwarded-For.
 *
 * With `hops` = N trusted proxies in front of every instance, each appends the address it received
 * the request from to `header` (X-Forwarded-For by default, or RFC 7239 `Forwarded`), so the
 * client is the N-th entry from the right; whatever the client wrote to the left of that is not
 * believed. With fewer entries than N the leftmost is taken.
 */
export interface TrustedProxy {
  /** Lower-case header name; '' when no proxy is trusted. */
  header: string
  hops: number
}

export function trustedProxy(): TrustedProxy {
  const cfg = (useRuntimeConfig().trustedProxy ?? {}) as { header?: unknown; hops?: unknown }
  const hops = Math.max(0, Math.floor(Number(cfg.hops) || 0))
  if (hops === 0) return { header: '', hops: 0 }
  const header = String(cfg.header || 'x-forwarded-for').trim().toLowerCase()
  return { header, hops }
}

/** The entries of a forwarding header, nearest proxy last. */
export function forwardedEntries(header: string, value: string): { for?: string; host?: string }[] {
  if (header === 'forwarded') {
    return value.split(',').map((element) => {
      const out: { for?: string; host?: string } = {}
      for (const pair of element.split(';')) {
        const eq = pair.indexOf('=')
        if (eq < 0) continue
        const key = pair.slice(0, eq).trim().toLowerCase()
        const v = pair.slice(eq + 1).trim().replace(/^"(.*)"$/, '$1')
        if (key === 'for') out.for = v
        else if (key === 'host') out.host = v
      }
      return out
    })
  }
  return value.split(',').map((v) => ({ for: v.trim() }))
}

/** One address as written by a proxy or the socket: port, brackets and the IPv4-mapped prefix removed. */
export function normaliseAddress(raw: string): string {
  let a = raw.trim()
  const bracketed = /^\[([^\]]+)\](?::\d+)?$/.exec(a)
  if (bracketed) a = bracketed[1]!
  else if (/^[\d.]+:\d+$/.test(a)) a = a.slice(0, a.lastIndexOf(':'))
  a = a.toLowerCase()
  if (a.startsWith('::ffff:') && isIP(a.slice(7)) === 4) a = a.slice(7)
  return a.slice(0, 64) || 'unknown'
}

/** Picks the client's entry from a list written by `hops` proxies (nearest last). */
export function pickClient<T>(entries: T[], hops: number): T | undefined {
  if (!entries.length) return undefined
  return entries[Math.max(0, entries.length - hops)]
}

export function clientAddress(event: H3Event): string {
  const proxy = trustedProxy()
  const peer = normaliseAddress(event.node.req.socket?.remoteAddress ?? 'unknown')
  if (!proxy.hops) return peer
  const value = getRequestHeader(event, proxy.header)
  if (!value) return peer
  const entry = pickClient(forwardedEntries(proxy.header, value).filter((e) => e.for), proxy.hops)
  return entry?.for ? normaliseAddress(entry.for) : peer
}

/** The host the client asked for: the Host header, or the trusted proxy's forwarded host. */
export function requestHost(event: H3Event): string {
  const proxy = trustedProxy()
  if (proxy.hops) {
    if (proxy.header === 'forwarded') {
      const value = getRequestHeader(event, 'forwarded')
      const hosts = value ? forwardedEntries('forwarded', value).filter((e) => e.host) : []
      if (hosts.length) return hosts[hosts.length - 1]!.host!
    } else {
      // The value the nearest proxy passed on: a proxy that appends leaves it rightmost.
      const value = getRequestHeader(event, 'x-forwarded-host')
      const last = value?.split(',').pop()?.trim()
      if (last) return last
    }
  }
  return getRequestHeader(event, 'host') ?? ''
}

/**
 * The key of the per-address sign-in throttle: an IPv4 address, or the /64 network of an IPv6
 * address (one host usually holds a whole /64, so counting single IPv6 addresses would let it
 * rotate past the limit).
 */
export function throttleAddress(address: string): string {
  if (isIP(address) !== 6) return address
  const [head = '', tail = ''] = address.split('::')
  const left = head ? head.split(':') : []
  const right = tail ? tail.split(':') : []
  const groups = address.includes('::') ? [...left, ...Array(Math.max(0, 8 - left.length - right.length)).fill('0'), ...right] : left
  return `${groups.slice(0, 4).map((g) => g.replace(/^0+(?=.)/, '')).join(':')}::/64`
}
