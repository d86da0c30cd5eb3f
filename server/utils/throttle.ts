import type { Knex } from 'knex'
import { throttleAddress } from './client-address'

// Sign-in throttling, kept in MariaDB so that every app instance sees the same counts.
// Per account: 5 failures in 15 minutes lock that account for 15 minutes.
// Per address (client address as resolved by client-address.ts; an IPv6 /64): 20 failures lock
// the address, but only for accounts that have not signed in successfully from it in the last
// `knownAddressDays` days: a team behind one NAT or proxy is not locked out by someone else's
// guessing, while spraying many accounts from one address still stops at 20.
export const THROTTLE = { perAccount: 5, perAddress: 20, windowMinutes: 15, lockMinutes: 15, knownAddressDays: 30 }

export interface ThrottleKey {
  key: string
  maxFailures: number
}

export function signInKeys(email: string, address: string): ThrottleKey[] {
  return [
    { key: `account:${email}`, maxFailures: THROTTLE.perAccount },
    { key: `address:${throttleAddress(address)}`, maxFailures: THROTTLE.perAddress },
  ]
}

/** The keys that decide whether this attempt may go ahead: without the address for a known account. */
export function keysToCheck(keys: ThrottleKey[], knownAccount: boolean): ThrottleKey[] {
  return knownAccount ? keys.filter((k) => k.key.startsWith('account:')) : keys
}

/** Whether the user signed in successfully from this address (its throttle key) lately. */
export async function signedInFrom(db: Knex, userId: number, address: string, now = new Date()): Promise<boolean> {
  const since = new Date(now.getTime() - THROTTLE.knownAddressDays * 86_400_000)
  const row = await db('sign_in_addresses').where({ user_id: userId, address: throttleAddress(address) }).where('last_success_at', '>', since).first('user_id')
  return Boolean(row)
}

export async function rememberAddress(db: Knex, userId: number, address: string, now = new Date()) {
  const key = throttleAddress(address)
  await db('sign_in_addresses').insert({ user_id: userId, address: key, last_success_at: now }).onConflict(['user_id', 'address']).merge(['last_success_at'])
  await db('sign_in_addresses').where('user_id', userId).where('last_success_at', '<', new Date(now.getTime() - THROTTLE.knownAddressDays * 86_400_000)).delete()
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
