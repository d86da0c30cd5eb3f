import { existsSync, readFileSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { gzipSync } from 'node:zlib'
import { beforeAll, describe, expect, it } from 'vitest'
import { BASE, db, signIn, USERS, type Client } from './helpers'

// Resumable uploads (the tus protocol, spoken here by hand so each part is under the test's
// control): parts, a dropped connection, resuming, refusals, expiry. Synthetic traces with
// known answers.
const MAPPING = { columns: { time: 'time_s', rpm: 'engine_rpm', speed: 'speed_kmh' }, units: { time: 'seconds', speed: 'kmh', temperature: 'C', pressure: 'bar' }, decimal: '.' }
const TUS = { 'tus-resumable': '1.0.0' }

/** 100 Hz: 40 s at 6,250 rpm then 40 s at 7,250, 180 km/h; `salt` makes the file unique. */
function trace(salt: number) {
  const lines = ['time_s,engine_rpm,speed_kmh']
  for (let i = 0; i < 8000; i++) lines.push(`${(i / 100).toFixed(2)},${i === 0 ? 6250 + salt : i < 4000 ? 6250 : 7250},180`)
  return `${lines.join('\n')}\n`
}

const b64 = (s: string) => Buffer.from(s).toString('base64')
const uploadsDir = () => join(process.env.NUXT_STORAGE_DIR!, 'uploads')

let race: Client
let engineId: number

async function tus(client: Client, method: string, path: string, headers: Record<string, string> = {}, body?: Uint8Array | ReadableStream) {
  const res = await fetch(`${BASE}${path}`, {
    method,
    headers: { cookie: client.cookie, origin: BASE, ...TUS, ...headers },
    body,
    ...(body instanceof ReadableStream ? { duplex: 'half' } : {}),
  } as RequestInit)
  return { status: res.status, headers: res.headers, text: await res.text() }
}

async function create(client: Client, length: number, gzip = true): Promise<string> {
  const res = await tus(client, 'POST', '/api/uploads', { 'upload-length': String(length), 'upload-metadata': `filename ${b64('fp3.csv')}${gzip ? `,encoding ${b64('gzip')}` : ''}` })
  expect(res.status).toBe(201)
  const location = res.headers.get('location')!
  expect(location).toMatch(/^\/api\/uploads\/[0-9a-f]{32}$/)
  return location
}

async function sendPart(client: Client, url: string, offset: number, part: Uint8Array) {
  return tus(client, 'PATCH', url, { 'upload-offset': String(offset), 'content-type': 'application/offset+octet-stream' }, part)
}

async function offsetOf(client: Client, url: string): Promise<number> {
  const res = await tus(client, 'HEAD', url)
  expect(res.status).toBe(200)
  return Number(res.headers.get('upload-offset'))
}

function importQuery() {
  return new URLSearchParams({ engineId: String(engineId), kind: 'practice', startedAt: '2026-11-22T10:00:00Z', fileName: 'fp3.csv', mapping: JSON.stringify(MAPPING) })
}

async function importUpload(client: Client, url: string) {
  const res = await fetch(`${BASE}${url}/import?${importQuery()}`, { method: 'POST', headers: { cookie: client.cookie, origin: BASE } })
  return { status: res.status, body: await res.json() }
}

beforeAll(async () => {
  race = await signIn('race@redfern.test')
  engineId = (await db()('engines').where('serial', 'KT4-2102').first()).id
})

describe('resumable compressed uploads', () => {
  it('an upload in parts, dropped in the middle and resumed, gives the session a plain upload gives', async () => {
    const csv = trace(1)
    // the plain upload first, for comparison; then it is taken out again so the file is new once more
    const plain = await fetch(`${BASE}/api/imports?${importQuery()}`, { method: 'POST', headers: { cookie: race.cookie, origin: BASE, 'content-type': 'text/csv' }, body: csv })
    expect(plain.status).toBe(201)
    const plainSession = (await plain.json()).session
    await db()('sessions').where('id', plainSession.id).delete()
    await db()('life_revision').where('id', 1).increment('revision', 1)

    const gz = gzipSync(csv)
    const part = Math.ceil(gz.length / 4)
    const url = await create(race, gz.length)
    expect((await sendPart(race, url, 0, gz.subarray(0, part))).status).toBe(204)
    expect((await sendPart(race, url, part, gz.subarray(part, 2 * part))).status).toBe(204)
    // the third part's connection drops half way
    const half = gz.subarray(2 * part, 2 * part + Math.floor(part / 2))
    const dropped = new ReadableStream({
      start(controller) {
        controller.enqueue(half)
        setTimeout(() => controller.error(new Error('link lost')), 200)
      },
    })
    await tus(race, 'PATCH', url, { 'upload-offset': String(2 * part), 'content-type': 'application/offset+octet-stream' }, dropped).catch(() => null)
    // a new connection (as after a reload) asks where to go on, and sends the rest from there
    let offset = 0
    await expect.poll(async () => (offset = await offsetOf(race, url)), { timeout: 10_000 }).toBeGreaterThanOrEqual(2 * part)
    expect(offset).toBeLessThanOrEqual(2 * part + half.length)
    expect((await importUpload(race, url)).status).toBe(409) // not finished yet
    expect((await sendPart(race, url, offset, gz.subarray(offset))).status).toBe(204)
    expect(await offsetOf(race, url)).toBe(gz.length)

    const res = await importUpload(race, url)
    expect(res.status).toBe(201)
    const s = res.body.session
    for (const k of ['runningSeconds', 'distanceKm', 'histogram', 'overRevs', 'maxRpm', 'maxSpeedKmh'] as const) expect(s[k], k).toEqual(plainSession[k])
    expect(s.runningSeconds).toBeCloseTo(79.99, 6)
    expect(s.histogram[12]).toBeCloseTo(40, 6) // 6,250 rpm in 6,000-6,500
    // imported: the parts are gone
    expect(existsSync(join(uploadsDir(), url.split('/').pop()!))).toBe(false)
    expect((await tus(race, 'HEAD', url)).status).toBe(404)
  })

  it('refuses a part at the wrong offset (a part sent twice) with 409', async () => {
    const gz = gzipSync(trace(2))
    const url = await create(race, gz.length)
    expect((await sendPart(race, url, 0, gz.subarray(0, 1000))).status).toBe(204)
    const again = await sendPart(race, url, 0, gz.subarray(0, 1000))
    expect(again.status).toBe(409)
    expect(await offsetOf(race, url)).toBe(1000)
    await tus(race, 'DELETE', url)
  })

  it('answers 404 to another user, for every step of an upload they did not start', async () => {
    const gz = gzipSync(trace(3))
    const url = await create(race, gz.length)
    expect((await sendPart(race, url, 0, gz)).status).toBe(204)
    for (const other of [await signIn(USERS.raceB), await signIn(USERS.supplierEngineer)]) {
      expect((await tus(other, 'HEAD', url)).status).toBe(404)
      expect((await sendPart(other, url, gz.length, new Uint8Array(1))).status).toBe(404)
      expect((await importUpload(other, url)).status).toBe(404)
      expect((await tus(other, 'DELETE', url)).status).toBe(404)
    }
    expect(await offsetOf(race, url)).toBe(gz.length)
    await tus(race, 'DELETE', url)
  })

  it('a corrupt gzip upload is refused and stores no session', async () => {
    const gz = gzipSync(trace(4))
    const bad = Buffer.concat([gz.subarray(0, 30), Buffer.alloc(64, 0x33), gz.subarray(94)])
    const url = await create(race, bad.length)
    expect((await sendPart(race, url, 0, bad)).status).toBe(204)
    const sessions = Number((await db()('sessions').count({ n: '*' }).first())!.n)
    const res = await importUpload(race, url)
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/not a readable gzip stream/)
    expect(Number((await db()('sessions').count({ n: '*' }).first())!.n)).toBe(sessions)
    await tus(race, 'DELETE', url)
  })

  it('an abandoned upload expires and the scheduled clean-up removes its parts', async () => {
    const gz = gzipSync(trace(5))
    const url = await create(race, gz.length)
    expect((await sendPart(race, url, 0, gz.subarray(0, 2000))).status).toBe(204)
    const id = url.split('/').pop()!
    const info = join(uploadsDir(), `${id}.json`)
    // started two days ago: past the 24 h expiry
    const meta = JSON.parse(readFileSync(info, 'utf8'))
    writeFileSync(info, JSON.stringify({ ...meta, creation_date: new Date(Date.now() - 48 * 3600_000).toISOString() }))
    // the test server looks for expired uploads every 2 s (scripts/test.sh)
    await expect.poll(() => existsSync(join(uploadsDir(), id)) || existsSync(info), { timeout: 20_000, interval: 500 }).toBe(false)
    expect([404, 410]).toContain((await tus(race, 'HEAD', url)).status)
    expect([404, 410]).toContain((await sendPart(race, url, 2000, gz.subarray(2000))).status)
  })
})
