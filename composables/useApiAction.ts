/**
 * Pending and error state around one mutation, for a form with one button and one message.
 * `run` answers true when the request succeeded; the error holds the server's message otherwise.
 * Pages may set `error` themselves for checks made before anything is sent.
 */
export function useApiAction<A extends unknown[], R>(fallback: string, action: (...args: A) => Promise<R>) {
  const pending = ref(false)
  const error = ref('')
  const result = shallowRef<R | null>(null)
  const failure = shallowRef<unknown>(null)

  async function run(...args: A): Promise<boolean> {
    pending.value = true
    error.value = ''
    failure.value = null
    try {
      result.value = await action(...args)
      return true
    } catch (e) {
      failure.value = e
      error.value = apiMessage(e, fallback)
      return false
    } finally {
      pending.value = false
    }
  }

  return { run, pending, error, result, failure }
}
