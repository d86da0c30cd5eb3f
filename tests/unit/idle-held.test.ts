import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { idleHeld } from '../../server/utils/idle-held'

describe('a value held while it is used', () => {
  beforeEach(() => vi.useFakeTimers())
  afterEach(() => vi.useRealTimers())

  it('is dropped after the idle time, and each get or set starts that time again', () => {
    const held = idleHeld<string>(1000)
    expect(held.get()).toBeNull()
    held.set('rows')
    vi.advanceTimersByTime(999)
    expect(held.get()).toBe('rows') // used: another 1000 ms from here
    vi.advanceTimersByTime(999)
    expect(held.get()).toBe('rows')
    vi.advanceTimersByTime(1000)
    expect(held.get()).toBeNull()
    held.set('again')
    expect(held.get()).toBe('again')
  })
})
