/**
 * A value held while it is used: dropped after `idleMs` without a get or a set. The timer keeps
 * no process alive. For large data a request may reuse if the next one comes soon.
 */
export function idleHeld<T>(idleMs: number) {
  let value: T | null = null
  let timer: ReturnType<typeof setTimeout> | undefined
  const touch = () => {
    clearTimeout(timer)
    timer = setTimeout(() => (value = null), idleMs)
    timer.unref?.()
  }
  return {
    get(): T | null {
      if (value !== null) touch()
      return value
    },
    set(v: T) {
      value = v
      touch()
    },
  }
}
