// Abandoned resumable uploads: parts of a logger file whose upload was never finished (or never
// imported) are removed once they expire. Handed the store's clean-up; never imports server/.

export interface UploadCleanupDeps {
  /** removes what has expired; answers how many uploads went */
  cleanUp: () => Promise<number>
  log: (message: string) => void
}

export async function runUploadCleanup(deps: UploadCleanupDeps): Promise<number> {
  try {
    const removed = await deps.cleanUp()
    if (removed > 0) deps.log(`removed ${removed} expired upload${removed === 1 ? '' : 's'}`)
    return removed
  } catch (e) {
    deps.log(`upload clean-up failed: ${(e as Error)?.message ?? e}`)
    return 0
  }
}
