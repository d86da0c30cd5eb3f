// How an issue asks for its invoice at once: the scheduler plugin listens and runs the invoice
// deliverer (tasks/deliver-invoices.ts); services never reach for the jobs themselves.
export interface InvoiceRun {
  statementId?: number
  result?: unknown
}

declare module 'nitropack/types' {
  interface NitroRuntimeHooks {
    /** Deliver queued invoices now (one statement's when `statementId` is set); the listener fills `run.result`. */
    'crankledger:deliver-invoices': (run: InvoiceRun) => Promise<void>
  }
}

/** Delivers the statement's invoice now; when the service is down it stays queued for the retries. */
export async function deliverInvoicesNow(statementId?: number): Promise<unknown> {
  const run: InvoiceRun = { statementId }
  try {
    await useNitroApp().hooks.callHook('crankledger:deliver-invoices', run)
  } catch (e: any) {
    console.error('[crankledger] invoice delivery failed:', e?.message ?? e)
  }
  return run.result
}
