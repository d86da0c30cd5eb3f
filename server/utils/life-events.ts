// How writes tell the rest of the server that the fleet's life moved. The scheduler plugin listens
// (server/plugins/scheduler.ts) and runs the life check; services never reach for the jobs themselves.
/** Filled by the scheduler plugin: what the life check and the mail round did (the jobs' own result shapes). */
export interface AlertRun {
  result?: { check: unknown; delivery: unknown }
}

declare module 'nitropack/types' {
  interface NitroRuntimeHooks {
    /** A write changed consumed life (a session stored or read again): run the life check soon. */
    'crankledger:life-changed': () => void
    /** An explicit request to run the life check and one mail round now; the listener fills `run.result`. */
    'crankledger:run-alerts': (run: AlertRun) => Promise<void>
    /** The server is draining: stop the jobs and finish a check in progress before the pool closes. */
    'crankledger:draining': () => Promise<void>
  }
}

/** Announce that life changed; the check runs in the background and the caller does not wait. */
export function announceLifeChanged(): void {
  useNitroApp().hooks.callHook('crankledger:life-changed').catch((e) => console.error('[crankledger] life-changed listener failed:', e?.message ?? e))
}
