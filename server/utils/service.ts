import type { Knex } from 'knex'

// Routes never touch the database: every service takes the database (pool or transaction) as its
// first argument, and a route hands it over through one of these two.

/** Calls a service with the server's pool. */
export function callService<A extends unknown[], R>(service: (db: Knex, ...args: A) => R, ...args: A): R {
  return service(useDb(), ...args)
}

/** Calls a service inside one transaction: all of its writes land, or none do. */
export function callInTransaction<A extends unknown[], R>(service: (trx: Knex.Transaction, ...args: A) => Promise<R>, ...args: A): Promise<R> {
  return useDb().transaction((trx) => service(trx, ...args))
}
