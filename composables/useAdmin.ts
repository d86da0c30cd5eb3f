export interface TaskRun { id: number; task: string; instance: string; outcome: string; startedAt: string; finishedAt: string | null; findings: number; alertsCreated: number; mailsQueued: number; mailsSent: number; mailsFailed: number; error: string | null }
export interface OutboxMail { id: number; alertId: number | null; kind: 'alert' | 'urgent' | 'digest'; to: string; subject: string; state: 'pending' | 'sent' | 'failed'; attempts: number; nextAttemptAt: string | null; lastError: string | null; sentAt: string | null; createdAt: string }
export interface Outbox { counts: Record<string, number>; mails: OutboxMail[] }

/** Scheduled task runs and the mail outbox, and a life check run on demand. */
export async function useAdmin() {
  const [runs, outbox] = await Promise.all([
    useFetch<TaskRun[]>('/api/admin/task-runs', { key: 'admin-runs', default: () => [] }),
    useFetch<Outbox>('/api/admin/outbox', { key: 'admin-outbox' }),
  ])
  const refresh = () => Promise.all([runs.refresh(), outbox.refresh()])

  async function runLifeCheck() {
    await $fetch('/api/admin/life-check', { method: 'POST' })
    await refresh()
  }

  return { runs: runs.data, outbox: outbox.data, refresh, runLifeCheck }
}
