// Backup and restore round trip: `npm run db:backup` of the test database (the demo data plus
// whatever earlier files wrote), `npm run db:restore` into a scratch database on the same
// instance, then every table compared by row count and an ordered hash of its rows.
//
// The scratch database is created and dropped over the instance's root socket (the app user
// has rights on its own database only); the app user is granted rights on it for the restore,
// so the restore runs exactly as an operator would run it, with the app's credentials.
import { execFileSync, spawnSync } from 'node:child_process'
import { createHash } from 'node:crypto'
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'

const SCRATCH = 'crankledger_restore'
const sourceUrl = process.env.NUXT_DATABASE_URL!
const scratchUrl = sourceUrl.replace(/\/[^/?]+(\?.*)?$/, `/${SCRATCH}$1`)
const socket = resolve(process.env.CL_DB_DIR ?? '.data/mariadb-test', 'run/mariadb.sock')
const appUser = decodeURIComponent(new URL(sourceUrl).username)
const work = mkdtempSync(join(tmpdir(), 'cl-backup-'))

function root(sql: string): string {
  return execFileSync('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '--batch', '--skip-column-names', '-e', sql], { encoding: 'utf8' })
}

function script(args: string[], url: string) {
  return spawnSync('bash', ['db/backup.sh', ...args], { env: { ...process.env, NUXT_DATABASE_URL: url }, encoding: 'utf8' })
}

const MARK = '--table-- '

/**
 * table -> [rows, SHA-256 of every row in primary-key order] for every base table. An ordered
 * hash rather than CHECKSUM TABLE: CHECKSUM TABLE gave different sums for identical rows of a
 * table with a stored generated column (installations.open_flag) in this MariaDB.
 * Two client processes in all (the table list, then every table's rows behind a marker line), so
 * that the comparison stays quick on a loaded machine. --batch writes one line per row (newlines
 * inside values are escaped), so a table's line count is its row count.
 */
function fingerprint(database: string): Record<string, [number, string]> {
  const tables = root(`SELECT t.TABLE_NAME, COALESCE(GROUP_CONCAT(CONCAT('\`', s.COLUMN_NAME, '\`') ORDER BY s.SEQ_IN_INDEX), ''),
      (SELECT COUNT(*) FROM information_schema.COLUMNS c WHERE c.TABLE_SCHEMA = t.TABLE_SCHEMA AND c.TABLE_NAME = t.TABLE_NAME)
    FROM information_schema.TABLES t
    LEFT JOIN information_schema.STATISTICS s ON s.TABLE_SCHEMA = t.TABLE_SCHEMA AND s.TABLE_NAME = t.TABLE_NAME AND s.INDEX_NAME = 'PRIMARY'
    WHERE t.TABLE_SCHEMA = '${database}' AND t.TABLE_TYPE = 'BASE TABLE' GROUP BY t.TABLE_NAME ORDER BY t.TABLE_NAME`)
    .trim().split('\n').filter(Boolean).map((line) => line.split('\t') as [string, string, string])
  const script = tables.map(([t, pk, columns]) => {
    const order = pk || Array.from({ length: Number(columns) }, (_, i) => i + 1).join(', ')
    return `SELECT '${MARK}${t}'; SELECT * FROM \`${database}\`.\`${t}\` ORDER BY ${order};`
  }).join('\n')
  const dump = execFileSync('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '--batch', '--skip-column-names', '-e', script], { encoding: 'latin1', maxBuffer: 1024 * 1024 * 1024 }) // latin1: byte for byte
  const out: Record<string, [number, string]> = {}
  for (const part of dump.split(MARK).slice(1)) {
    const [name, ...rows] = part.replace(/\n$/, '').split('\n')
    out[name!] = [rows.length, createHash('sha256').update(rows.join('\n'), 'latin1').digest('hex')]
  }
  expect(Object.keys(out)).toEqual(tables.map(([t]) => t))
  return out
}

beforeAll(() => {
  root(`DROP DATABASE IF EXISTS \`${SCRATCH}\`; CREATE DATABASE \`${SCRATCH}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
    GRANT ALL PRIVILEGES ON \`${SCRATCH}\`.* TO '${appUser}'@'127.0.0.1'; GRANT ALL PRIVILEGES ON \`${SCRATCH}\`.* TO '${appUser}'@'localhost';`)
})

afterAll(() => {
  root(`DROP DATABASE IF EXISTS \`${SCRATCH}\`; REVOKE ALL PRIVILEGES ON \`${SCRATCH}\`.* FROM '${appUser}'@'127.0.0.1'; REVOKE ALL PRIVILEGES ON \`${SCRATCH}\`.* FROM '${appUser}'@'localhost';`)
  rmSync(work, { recursive: true, force: true })
})

describe('backup and restore', () => {
  const dump = join(work, 'demo.sql')

  it('dumps the test database and restores it into an empty database with every row count and row hash equal', () => {
    const backup = script(['backup', dump], sourceUrl)
    expect(backup.status, backup.stderr).toBe(0)
    expect(backup.stdout.trim()).toBe(dump)
    expect(statSync(dump).mode & 0o077).toBe(0) // password hashes inside: owner only
    const text = readFileSync(dump, 'utf8')
    expect(text).toMatch(/-- Dump completed/)
    expect(text).not.toMatch(/^USE |^CREATE DATABASE/m) // restorable under any name

    const restore = script(['restore', dump], scratchUrl)
    expect(restore.status, restore.stderr).toBe(0)

    const source = fingerprint(new URL(sourceUrl).pathname.slice(1))
    const restored = fingerprint(SCRATCH)
    expect(Object.keys(source).length).toBeGreaterThan(20)
    expect(source.users![0]).toBeGreaterThanOrEqual(10) // the demo's sign-ins at least
    expect(source.sessions![0]).toBeGreaterThan(0)
    expect(restored).toEqual(source)
    // and the comparison does see a one-character change
    root(`UPDATE \`${SCRATCH}\`.users SET name = CONCAT(name, 'x') ORDER BY id LIMIT 1`)
    expect(fingerprint(SCRATCH).users).not.toEqual(source.users)
  })

  it('refuses to restore over a database that has tables, unless --force', () => {
    const again = script(['restore', dump], scratchUrl)
    expect(again.status).not.toBe(0)
    expect(again.stderr).toMatch(/already has \d+ tables: restore only into an empty database, or pass --force/)

    root(`CREATE TABLE \`${SCRATCH}\`.stray (id INT PRIMARY KEY)`)
    const forced = script(['restore', dump, '--force'], scratchUrl)
    expect(forced.status, forced.stderr).toBe(0)
    // --force drops what was there, so the result is the dump and nothing else
    expect(root(`SELECT COUNT(*) FROM information_schema.TABLES WHERE TABLE_SCHEMA = '${SCRATCH}' AND TABLE_NAME = 'stray'`).trim()).toBe('0')
  })

  it('refuses a truncated dump and leaves the target untouched', () => {
    const cut = join(work, 'cut.sql')
    const text = readFileSync(dump, 'utf8')
    writeFileSync(cut, text.slice(0, Math.floor(text.length / 2)))
    root(`DROP DATABASE \`${SCRATCH}\`; CREATE DATABASE \`${SCRATCH}\``)
    const res = script(['restore', cut], scratchUrl)
    expect(res.status).not.toBe(0)
    expect(res.stderr).toMatch(/truncated or not a mariadb-dump file; nothing restored/)
    expect(root(`SELECT COUNT(*) FROM information_schema.TABLES WHERE TABLE_SCHEMA = '${SCRATCH}'`).trim()).toBe('0')
  })

  it('refuses a database URL it cannot read', () => {
    const res = script(['backup', join(work, 'x.sql')], 'postgres://nobody@somewhere/db')
    expect(res.status).not.toBe(0)
    expect(res.stderr).toMatch(/cannot read NUXT_DATABASE_URL/)
  })
})
