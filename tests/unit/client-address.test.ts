// The pure parts of server/utils/client-address.ts: reading forwarding headers written by a
// stated number of trusted proxies, and the per-address throttle key.
import { describe, expect, it } from 'vitest'
import { forwardedEntries, normaliseAddress, pickClient, throttleAddress } from '../../server/utils/client-address'

describe('forwarding headers', () => {
  it('takes the entry the nearest trusted proxies appended, whatever the client wrote before it', () => {
    const entries = forwardedEntries('x-forwarded-for', '6.6.6.6, 10.0.0.1, 203.0.113.7')
    expect(pickClient(entries, 1)?.for).toBe('203.0.113.7')
    expect(pickClient(entries, 2)?.for).toBe('10.0.0.1')
    expect(pickClient(entries, 9)?.for).toBe('6.6.6.6')
    expect(pickClient([], 1)).toBeUndefined()
  })

  it('reads RFC 7239 Forwarded: for= and host=, quoted, with ports and IPv6 brackets', () => {
    const entries = forwardedEntries('forwarded', 'for=6.6.6.6;host=rival.example, for="[2001:db8::1]:4711";proto=https;host=crank.example')
    expect(entries).toEqual([{ for: '6.6.6.6', host: 'rival.example' }, { for: '[2001:db8::1]:4711', host: 'crank.example' }])
    expect(normaliseAddress(entries[1]!.for!)).toBe('2001:db8::1')
  })

  it('normalises addresses', () => {
    expect(normaliseAddress('::ffff:127.0.0.1')).toBe('127.0.0.1')
    expect(normaliseAddress('192.0.2.1:8080')).toBe('192.0.2.1')
    expect(normaliseAddress(' 2001:DB8::5 ')).toBe('2001:db8::5')
    expect(normaliseAddress('')).toBe('unknown')
  })
})

describe('the throttle key of an address', () => {
  it('is the IPv4 address itself', () => {
    expect(throttleAddress('203.0.113.7')).toBe('203.0.113.7')
  })

  it('is the /64 of an IPv6 address, however it is written', () => {
    expect(throttleAddress('2001:db8:1:2::5')).toBe('2001:db8:1:2::/64')
    expect(throttleAddress('2001:0db8:0001:0002:ffff:0:0:9')).toBe('2001:db8:1:2::/64')
    expect(throttleAddress('2001:db8::1')).toBe('2001:db8:0:0::/64')
    expect(throttleAddress('::1')).toBe('0:0:0:0::/64')
  })

  it('leaves anything else as it is', () => {
    expect(throttleAddress('unknown')).toBe('unknown')
  })
})
