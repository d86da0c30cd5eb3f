import { join } from 'node:path'
import { gzipSync } from 'node:zlib'
import { beforeAll, describe, expect, it } from 'vitest'
import { BASE, count, db, signIn, storedFiles, type Client } from './helpers'

// Compressed uploads and export layouts through the server. Synthetic traces with known answers.
const MAPPING = { columns: { time: 'Time', rpm: 'Engine RPM', speed: 'Speed' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }

/** 100 Hz at `rpm`, 144 km/h; `salt` makes each file unique (a different first rpm). */
function trace(seconds: number, rpm: number, salt: number) {
  const lines = ['Time,Engine RPM,Speed']
  for (let i = 0; i < seconds * 100; i++) lines.push(`${(i / 100).toFixed(2)},${i === 0 ? rpm + salt : rpm},144`)
  return `${lines.join('\n')}\n`
}

let race: Client
let engineId: number

async function upload(body: string | Buffer, opts: { gzip?: boolean; mapping?: object } = {}) {
  const q = new URLSearchParams({
    engineId: String(engineId),
    kind: 'test',
    startedAt: new Date(Date.now() - 7200_000).toISOString(),
    fileName: 'bench-run.csv',
    mapping: JSON.stringify(opts.mapping ?? MAPPING),
  })
  const headers: Record<string, string> = { cookie: race.cookie, 'content-type': 'text/csv', origin: BASE }
  if (opts.gzip) headers['content-encoding'] = 'gzip'
  const res = await fetch(`${BASE}/api/imports?${q}`, { method: 'POST', headers, body: typeof body === 'string' ? body : new Uint8Array(body) })
  return { status: res.status, body: await res.json() }
}

beforeAll(async () => {
  race = await signIn('race@redfern.test')
  engineId = (await db()('engines').where('serial', 'KT4-2102').first()).id
})

describe('compressed uploads', () => {
  it('a gzip-compressed file gives the session the plain file gives, and is kept as sent', async () => {
    const csv = trace(20, 6250, 11)
    const gz = gzipSync(csv)
    const res = await upload(gz, { gzip: true })
    expect(res.status).toBe(201)
    const s = res.body.session
    expect(s.runningSeconds).toBeCloseTo(19.99, 6)
    expect(s.distanceKm).toBeCloseTo((144 * 19.99) / 3600, 3)
    expect(s.histogram[12]).toBeCloseTo(19.99, 6) // 6,250 rpm in the 6,000-6,500 band
    const row = await db()('sessions').where('id', s.id).first()
    const { createHash } = await import('node:crypto')
    // the duplicate check hashes the uncompressed content
    expect(row.file_sha256).toBe(createHash('sha256').update(csv).digest('hex'))
    // the stored copy is the upload itself, not compressed a second time
    const { readFileSync } = await import('node:fs')
    const stored = readFileSync(join(process.env.NUXT_STORAGE_DIR!, row.file_key.replace(/:/g, '/')))
    expect(stored.equals(gz)).toBe(true)

    // the same file sent plain is the same file
    const plain = await upload(csv)
    expect(plain.status).toBe(409)
    expect(plain.body.message).toContain(`session ${s.id}`)
  })

  it.each([
    ['corrupt', (gz: Buffer) => Buffer.concat([gz.subarray(0, 20), Buffer.alloc(40, 0x5a), gz.subarray(60)]), /corrupt/],
    ['cut off', (gz: Buffer) => gz.subarray(0, Math.floor(gz.length / 2)), /truncated/],
  ])('a %s gzip stream is refused and nothing is stored', async (_name, spoil, message) => {
    const sessions = await count('sessions')
    const files = storedFiles()
    const res = await upload(spoil(gzipSync(trace(30, 5750, 12))), { gzip: true })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/not a readable gzip stream/)
    expect(res.body.message).toMatch(message)
    expect(res.body.data.code).toBe('bad_gzip')
    expect(await count('sessions')).toBe(sessions)
    expect(storedFiles()).toBe(files)
  })
})

describe('export layouts through the server', () => {
  it('keeps the metadata lines with the session and reads units from the units row', async () => {
    const lines = ['Format\tgeneric export', 'Vehicle\tcar 7', 'Date\t2031-05-17', '"Time"\t"Engine RPM"\t"Speed"', 'ms\trpm\tmph']
    for (let i = 0; i < 1000; i++) lines.push(`${i * 10}\t${i === 0 ? 6013 : 6000}\t100`)
    const mapping = { ...MAPPING, delimiter: '\t', layout: { headerLine: 4, unitsRow: true, unitsFromRow: true } }
    const res = await upload(`\uFEFF${lines.join('\r\n')}\r\n`, { mapping })
    expect(res.status).toBe(201)
    // 100 mph = 160.9344 km/h (NIST SP 811: 1 mile = 1.609344 km) for 9.99 s
    expect(res.body.session.distanceKm).toBeCloseTo((160.9344 * 9.99) / 3600, 3)
    expect(res.body.session.runningSeconds).toBeCloseTo(9.99, 6)
    const view = await race.get(`/api/sessions/${res.body.session.id}`)
    expect(view.body.details.loggerMetadata).toEqual(['Format\tgeneric export', 'Vehicle\tcar 7', 'Date\t2031-05-17'])
  })

  it('refuses a units row naming a unit it cannot read, naming row and column', async () => {
    const csv = `Logger export\nTime,Engine RPM,Speed\ns,rpm,knots\n0,6000,100\n0.01,6000,100\n`
    const res = await upload(csv, { mapping: { ...MAPPING, layout: { headerLine: 2, unitsRow: true, unitsFromRow: true } } })
    expect(res.status).toBe(400)
    expect(res.body.message).toBe('Row 3, column "Speed": unit "knots" is not one that can be read (km/h or mph)')
  })

  it('refuses a preamble with no channel names after it', async () => {
    const res = await upload('Logger export\nVehicle: car 7\n', { mapping: { ...MAPPING, layout: { headerLine: 3, unitsRow: false, unitsFromRow: false } } })
    expect(res.status).toBe(400)
    expect(res.body.message).toBe('The channel names should be on line 3, but the file ends at line 2')
  })
})
