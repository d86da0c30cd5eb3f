// The alert schedule is checked when the server starts: a bad expression must stop it, not silently never run.
import { validateDetailed } from 'node-cron'

export function scheduleProblem(expression: unknown): string | null {
  if (typeof expression !== 'string' || !expression.trim()) return 'alertSchedule (NUXT_ALERT_SCHEDULE) is empty: give a cron expression such as "*/15 * * * *"'
  const result = validateDetailed(expression.trim())
  if (result.valid) return null
  const why = result.errors.map((e) => `${e.field}: ${e.message}`).join('; ')
  return `alertSchedule (NUXT_ALERT_SCHEDULE) "${expression}" is not a valid cron expression (${why}); use five or six fields such as "*/15 * * * *"`
}

export function assertValidSchedule(expression: unknown): string {
  const problem = scheduleProblem(expression)
  if (problem) throw new Error(problem)
  return String(expression).trim()
}
