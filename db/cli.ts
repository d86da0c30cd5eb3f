// Database chores for the start and test scripts: `tsx db/cli.ts migrate|seed|reset|wait`.
import knexFactory from 'knex'
import { knexConfig } from './knexfile'
import { migrateLatest } from './migrations'
import { seedDemo } from './seeds/demo'

const command = process.argv[2]
const knex = knexFactory(knexConfig())

async function isEmpty() {
  const row = await knex('organisations').count({ n: '*' }).first()
  return Number(row?.n ?? 0) === 0
}

async function dropAll() {
  const rows = (await knex.raw('SELECT TABLE_NAME FROM information_schema.TABLES WHERE TABLE_SCHEMA = DATABASE()')) as [{ TABLE_NAME: string }[]]
  await knex.raw('SET FOREIGN_KEY_CHECKS = 0')
  for (const { TABLE_NAME } of rows[0]) await knex.raw('DROP TABLE IF EXISTS ??', [TABLE_NAME])
  await knex.raw('SET FOREIGN_KEY_CHECKS = 1')
}

try {
  if (command === 'migrate') {
    const [, applied] = await migrateLatest(knex)
    console.log(applied.length ? `migrations applied: ${applied.join(', ')}` : 'schema up to date')
  } else if (command === 'seed') {
    if (await isEmpty()) {
      await seedDemo(knex)
      console.log('demo scenario seeded')
    } else {
      console.log('database has data: demo seed skipped')
    }
  } else if (command === 'reset') {
    await dropAll()
    await migrateLatest(knex)
    await seedDemo(knex)
    console.log('database reset to the demo scenario')
  } else {
    console.error('usage: tsx db/cli.ts migrate|seed|reset')
    process.exitCode = 2
  }
} catch (error) {
  console.error(`database ${command} failed:`, error instanceof Error ? error.message : error)
  process.exitCode = 1
} finally {
  await knex.destroy()
}
