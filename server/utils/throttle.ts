import type { Knex } from 'knex'

// Sign-in throttling, kept in MariaDB so that every app instance sees the same counts.
export const THROTTLE = { perAccount: 5, perAddress: 20, windowMinutes: 15, lockMinutes: 15 }

export interface ThrottleKey {
  key: string
  maxFailures: number
}

export function signInKeys(email: string, ip: string): ThrottleKey[] {
  return [
    { key: `account:${email}`, maxFailures: THROTTLE.perAccount },
    { key: `address:${ip}`, maxFailures: THROTTLE.perAddress },
  ]
}

export async function throttleWait(db: Knex, keys: ThrottleKey[], now = new Date()): Promise<number> {
  const rows = await db('sign_in_throttle').whereIn('throttle_key', keys.map((k) => k.key)).whereNotNull('locked_until')
  let wait = 0
  for (const r of rows) {
    const until = new Date(r.locked_until).getTime() - now.getTime()
    if (until > wait) wait = until
  }
  return Math.ceil(wait / 1000)
}

export async function recordFailure(db: Knex, keys: ThrottleKey[], now = new Date()) {
  const windowStart = new Date(now.getTime() - THROTTLE.windowMinutes * 60_000)
  for (const { key, maxFailures } of keys) {
    await db.transaction(async (trx) => {
      const row = await trx('sign_in_throttle').where('throttle_key', key).forUpdate().first()
      let failures = 1
      if (row && new Date(row.window_started_at) > windowStart) failures = row.failures + 1
      const lockedUntil = failures >= maxFailures ? new Date(now.getTime() + THROTTLE.lockMinutes * 60_000) : null
      if (row) {
        await trx('sign_in_throttle').where('throttle_key', key).update({
          failures,
          window_started_at: failures === 1 ? now : row.window_started_at,
          locked_until: lockedUntil,
        })
      } else {
        await trx('sign_in_throttle').insert({ throttle_key: key, failures, window_started_at: now, locked_until: lockedUntil })
      }
    })
  }
}

export async function clearFailures(db: Knex, keys: ThrottleKey[]) {
  await db('sign_in_throttle').whereIn('throttle_key', keys.filter((k) => k.key.startsWith('account:')).map((k) => k.key)).delete()
}
