// CSV exports: a teardown's measurements and a part's back-to-birth history, byte for byte.
// On an engine of this file's own (a new KT4-20 leased to Marlowe, team A), with three sessions
// logged through the API and a teardown inserted with readings chosen by the test; all removed
// afterwards. Expected rows are written from those inputs and from the database rows, never from
// the export code.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Client, db, signIn, USERS } from './helpers'
import { freshEngine, removeFreshEngines, type FreshEngine } from './fresh-engine'

const OPENED = '2026-03-02T07:30:00.000Z'
const MEASURED = '2026-03-02T10:15:00.000Z'

let engine: FreshEngine
let teardownId: number
let partId: number
let partSerial: string
let positionLabel: string
let chars: { key: string; label: string; unit: string; nominal: number; min: number; max: number }[]
let mechanic: { id: number; name: string }
let manager: Client
let otherTeam: Client

/** How a spreadsheet receives a header and rows: RFC 4180 lines ending CRLF. */
const csv = (lines: string[]) => `${lines.join('\r\n')}\r\n`
/** RFC 4180: a cell holding a comma or a quote is quoted, quotes doubled */
const cell = (s: string) => (/[",]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s)

beforeAll(async () => {
  engine = await freshEngine('KT4-EXP', { typeCode: 'KT4-20', builtDaysAgo: 300 })
  const inst = await db()('installations').where({ engine_id: engine.id, position: 'rod-1' }).first()
  const comp = await db()('components').where('id', inst.component_id).first()
  const ct = await db()('component_types').where('id', comp.component_type_id).first()
  const pos = await db()('engine_type_positions').where({ engine_type_id: engine.engineTypeId, position: 'rod-1' }).first()
  partId = comp.id
  partSerial = comp.serial
  positionLabel = pos.label
  chars = (typeof ct.characteristics === 'string' ? JSON.parse(ct.characteristics) : ct.characteristics).slice(0, 2)
  // Two sessions at past rounds of the series (their names hold a comma: the CSV must quote them) and a test.
  const race = await signIn(USERS.raceA)
  // A hand-entered histogram covers 0 rpm to 1,000 rpm above the rev limit (KT4-20: 8,000 + 1,000 in 500 rpm bands = 18).
  const type = await db()('engine_types').where('id', engine.engineTypeId).first('rev_limit_rpm', 'band_width_rpm')
  const bands = Math.ceil((type.rev_limit_rpm + 1000) / type.band_width_rpm)
  const rounds = await db()('events').where('series', 'Coastline Touring Cup').where('ends_at', '<', new Date()).orderBy('starts_at', 'desc').limit(2)
  const logged = [
    ...rounds.map((ev: any, i: number) => ({ eventId: ev.id, kind: 'race', startedAt: new Date(new Date(ev.starts_at).getTime() + 3_600_000).toISOString(), runningSeconds: 2400 + i * 300, distanceKm: 98.4 + i })),
    { eventId: null, kind: 'test', startedAt: new Date(Date.now() - 86_400_000).toISOString(), runningSeconds: 1234.5, distanceKm: 41.25 },
  ]
  for (const s of logged) {
    const histogram = Array<number>(bands).fill(0)
    histogram[Math.floor(bands / 2)] = s.runningSeconds
    const res = await race.post('/api/sessions', { engineId: engine.id, histogram, ...s })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
  }
  mechanic = await db()('users').where('email', USERS.mechanicA).first('id', 'name')
  const signer = await db()('users').where('email', USERS.supplierEngineer).first('id')
  const [inserted] = await db()('teardowns').insert({ engine_id: engine.id, reason: 'scheduled', opened_by: mechanic.id, opened_at: new Date(OPENED), state: 'signed off', signed_by: signer.id, signed_at: new Date('2026-03-03T09:00:00Z'), note: 'Export check' })
  teardownId = inserted!
  // one reading in tolerance (the nominal), one above the band
  await db()('teardown_measurements').insert([
    { teardown_id: teardownId, component_id: partId, characteristic_key: chars[0]!.key, value: chars[0]!.nominal, unit: chars[0]!.unit, verdict: 'in', measured_by: mechanic.id, at: new Date(MEASURED) },
    { teardown_id: teardownId, component_id: partId, characteristic_key: chars[1]!.key, value: 0.0875, unit: chars[1]!.unit, verdict: 'high', measured_by: mechanic.id, at: new Date(MEASURED) },
  ])
  manager = await signIn(USERS.managerA)
  otherTeam = await signIn(USERS.managerB)
})

afterAll(async () => {
  if (teardownId) await db()('teardowns').where('id', teardownId).delete()
  await removeFreshEngines([engine])
})

async function download(client: Client, path: string) {
  const res = await client.get(path)
  return { status: res.status, type: res.headers.get('content-type'), disposition: res.headers.get('content-disposition'), text: res.body as string }
}

describe('teardown measurements CSV', () => {
  it('holds one row per reading with its band, verdict, who measured and when', async () => {
    const r = await download(manager, `/api/teardowns/${teardownId}/measurements.csv`)
    expect(r.status).toBe(200)
    expect(r.type).toBe('text/csv; charset=utf-8')
    expect(r.disposition).toBe(`attachment; filename="teardown-${teardownId}-${engine.serial}-measurements.csv"`)
    const [a, b] = chars as [(typeof chars)[0], (typeof chars)[0]]
    expect(r.text).toBe(
      csv([
        'teardown,engine,position,serial,removed,characteristic,unit,nominal,min,max,value,verdict,measured_by,measured_at_utc',
        `${teardownId},${engine.serial},${positionLabel},${partSerial},no,${a.label},${a.unit},${a.nominal},${a.min},${a.max},${a.nominal},in tolerance,${mechanic.name},${MEASURED}`,
        `${teardownId},${engine.serial},${positionLabel},${partSerial},no,${b.label},${b.unit},${b.nominal},${b.min},${b.max},0.0875,out: high,${mechanic.name},${MEASURED}`,
      ]),
    )
  })

  it('writes a name that starts like a formula as text (OWASP CSV injection)', async () => {
    await db()('users').where('id', mechanic.id).update({ name: '=HYPERLINK("http://x.test","y")' })
    try {
      const r = await download(manager, `/api/teardowns/${teardownId}/measurements.csv`)
      expect(r.text.split('\r\n')[1]).toContain(`,"'=HYPERLINK(""http://x.test"",""y"")",${MEASURED}`)
    } finally {
      await db()('users').where('id', mechanic.id).update({ name: mechanic.name })
    }
  })

  it('another team, an unknown teardown and a malformed id', async () => {
    expect((await download(otherTeam, `/api/teardowns/${teardownId}/measurements.csv`)).status).toBe(404)
    expect((await download(manager, '/api/teardowns/999999/measurements.csv')).status).toBe(404)
    expect((await download(manager, '/api/teardowns/abc/measurements.csv')).status).toBe(400)
  })
})

describe('part history CSV', () => {
  it('lists the installations and every session the part ran, oldest first', async () => {
    const installs = await db()('installations as i').join('engines as e', 'e.id', 'i.engine_id').where('i.component_id', partId).orderBy('i.from_at').select('i.*', 'e.serial')
    const lines: { at: string; order: number; line: string }[] = []
    for (const i of installs) {
      const from = new Date(i.from_at).toISOString()
      const to = i.to_at ? new Date(i.to_at).toISOString() : ''
      lines.push({ at: from, order: 0, line: `installed,${from},${to},${i.serial},${i.position},,,,` })
      const q = db()('sessions as s').leftJoin('events as ev', 'ev.id', 's.event_id').where('s.engine_id', i.engine_id).where('s.started_at', '>=', i.from_at)
      if (i.to_at) q.where('s.started_at', '<', i.to_at)
      for (const s of await q.select('s.*', 'ev.name as event_name')) {
        const at = new Date(s.started_at).toISOString()
        const hours = Number((Number(s.running_seconds) / 3600).toFixed(3))
        const km = Number(Number(s.distance_km).toFixed(1))
        lines.push({ at, order: 1, line: `session,${at},,${i.serial},,${cell(s.event_name ?? '')},${s.kind},${hours},${km}` })
      }
    }
    lines.sort((x, y) => x.at.localeCompare(y.at) || x.order - y.order)
    expect(lines.map((l) => l.line.split(',')[0])).toEqual(['installed', 'session', 'session', 'session']) // the build and the three sessions

    const r = await download(manager, `/api/parts/${partId}/history.csv`)
    expect(r.status).toBe(200)
    expect(r.disposition).toBe(`attachment; filename="part-${partSerial}-history.csv"`)
    expect(r.text).toBe(csv(['record,from_utc,to_utc,engine,position,event,session_kind,running_h,distance_km', ...lines.map((l) => l.line)]))
  })

  it('another team gets 404, as for a part that does not exist', async () => {
    expect((await download(otherTeam, `/api/parts/${partId}/history.csv`)).status).toBe(404)
    expect((await download(manager, '/api/parts/999999/history.csv')).status).toBe(404)
  })
})
