// Teardown, swap and sign-off through the API, on KT4-2104 (a Redfern engine on the shelf that
// no other test file depends on). Image bytes are built here so that their content is known.
import { existsSync, readdirSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { beforeAll, describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics' // the ESM build has no default export
import { buildAt, type Installation } from '../../shared/domain/life'
import { BASE, Client, USERS, db, signIn } from './helpers'
import { tinyJpeg, tinyPng } from './images'

const ENGINE = 'KT4-2104'

// ---- helpers ------------------------------------------------------------------------------------

async function engineRow(serial: string) {
  return db()('engines').where('serial', serial).first()
}
let spareCounter = 0
async function newSpare(typeCode: string) {
  const ct = await db()('component_types').where('code', typeCode).first()
  spareCounter += 1
  const serial = `TDT-${typeCode}-${Date.now().toString(36)}-${spareCounter}`
  await db()('components').insert({ supplier_id: ct.supplier_id, component_type_id: ct.id, serial, status: 'serviceable', born_at: new Date(Date.now() - 86_400_000) })
  return serial
}
async function upload(client: Client, path: string, bytes: Uint8Array, name: string, type: string) {
  const form = new FormData()
  form.append('file', new Blob([new Uint8Array(bytes)], { type }), name)
  return client.request('POST', path, form)
}
function filesIn(dir: string): number {
  if (!existsSync(dir)) return 0
  let n = 0
  for (const f of readdirSync(dir)) {
    const p = join(dir, f)
    n += statSync(p).isDirectory() ? filesIn(p) : 1
  }
  return n
}
const PHOTO_DIR = join(process.env.NUXT_STORAGE_DIR ?? join(process.cwd(), '.data/files'), 'teardown/photos')
async function installations(engineId: number): Promise<(Installation & { id: number })[]> {
  const rows = await db()('installations').where('engine_id', engineId)
  return rows.map((r) => ({ id: r.id, componentId: r.component_id, engineId: r.engine_id, position: r.position, from: new Date(r.from_at).toISOString(), to: r.to_at ? new Date(r.to_at).toISOString() : null }))
}
async function buildFromDb(engineId: number, at: Date) {
  const rows = await db()('installations').where('engine_id', engineId).where('from_at', '<=', at).where((q) => q.whereNull('to_at').orWhere('to_at', '>', at))
  return rows.map((r) => `${r.position}:${r.component_id}`).sort()
}
async function signOff(td: number, by: Client) {
  const r = await by.post(`/api/teardowns/${td}/sign-off`, { confirm: true, note: null })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
}
async function manualSession(client: Client, engineId: number, hours: number) {
  const types = (await client.get('/api/engine-types')).body
  const kt4 = types.find((t: any) => t.code === 'KT4-20')
  const bands = Math.ceil((kt4.revLimitRpm + 1000) / kt4.bandWidthRpm)
  const histogram = Array(bands).fill(0)
  histogram[Math.floor(kt4.referenceRpm / kt4.bandWidthRpm)] = hours * 3600
  const r = await client.post('/api/sessions', { engineId, eventId: null, kind: 'test', startedAt: new Date().toISOString(), runningSeconds: hours * 3600, distanceKm: 0, histogram, overRevs: [] })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
}
const pause = (ms: number) => new Promise((r) => setTimeout(r, ms))

describe('teardown, swap and sign-off', () => {
  let workshop: Client
  let engineer: Client
  let teamMechanic: Client
  let managerC: Client
  let engine: any

  beforeAll(async () => {
    ;[workshop, engineer, teamMechanic, managerC] = await Promise.all([signIn(USERS.supplierMechanic), signIn(USERS.supplierEngineer), signIn(USERS.mechanicA), signIn('manager@redfern.test')])
    engine = await engineRow(ENGINE)
  })

  it('runs a full teardown: sheet, findings, photos, swaps and a second-person sign-off, keeping every part\'s life continuous', async () => {
    const before = (await engineer.get(`/api/engines/${engine.id}`)).body
    const hoursBefore = new Map<number, number>(before.parts.map((p: any) => [p.componentId, p.hours]))

    // A 40 h plan for the next event: more than any fresh conrod's 39.15 h, to trip the life warning.
    const nextEvent = await db()('events').where('series', 'Coastline Touring Cup').where('ends_at', '>', new Date()).orderBy('starts_at').first()
    expect((await managerC.put(`/api/events/${nextEvent.id}/plans/${engine.id}`, { chassis: null, plannedSeconds: 40 * 3600, plannedKm: null })).status).toBe(200)

    const start = await workshop.post('/api/teardowns', { engineId: engine.id, reason: 'scheduled', note: 'Mid-season inspection' })
    expect(start.status, JSON.stringify(start.body)).toBe(201)
    const td = start.body.id
    // Opening the teardown gave the engine's assignments back (an engine in teardown runs no events),
    // so the 40 h plan the swap's life warning is checked against below is written straight to the table.
    expect(await db()('event_plans').where({ event_id: nextEvent.id, engine_id: engine.id }).first()).toBeUndefined()
    await db()('event_plans').insert({ event_id: nextEvent.id, engine_id: engine.id, team_id: engine.team_id, chassis: null, planned_seconds: 40 * 3600 })
    await db()('life_revision').where('id', 1).increment('revision', 1)
    const row = await engineRow(ENGINE)
    expect([row.status, row.location]).toEqual(['teardown', 'teardown'])
    expect((await workshop.post('/api/teardowns', { engineId: engine.id, reason: 'scheduled' })).status).toBe(409)
    // Another team's mechanic sees nothing of it.
    expect((await teamMechanic.get(`/api/teardowns/${td}`)).status).toBe(404)
    expect((await teamMechanic.put(`/api/teardowns/${td}/measurements`, { componentId: 1, key: 'x', value: 1 })).status).toBe(404)
    expect((await teamMechanic.get('/api/teardowns')).body.some((t: any) => t.id === td)).toBe(false)
    // An engine in teardown cannot be assigned to an event.
    const blocked = await managerC.put(`/api/events/${nextEvent.id}/plans/${engine.id}`, { chassis: null, plannedSeconds: 3600, plannedKm: null })
    expect(blocked.status).toBe(409)
    expect(blocked.body.message).toMatch(/teardown/)

    const sheet = (await workshop.get(`/api/teardowns/${td}`)).body
    const sorts = (await db()('engine_type_positions').where('engine_type_id', engine.engine_type_id)).reduce((m: Map<string, number>, p: any) => m.set(p.position, p.sort), new Map())
    const order = sheet.parts.map((p: any) => sorts.get(p.position))
    expect(order).toEqual([...order].sort((a: number, b: number) => a - b))
    const rod1 = sheet.parts.find((p: any) => p.position === 'rod-1')
    const crank = sheet.parts.find((p: any) => p.position === 'crank')
    const piston1 = sheet.parts.find((p: any) => p.position === 'piston-1')
    expect(rod1.rows.map((r: any) => r.key)).toEqual(['big_end_ovality', 'small_end_bore', 'bolt_stretch', 'big_end_clearance'])

    const put = (componentId: number, key: string, value: number, unit?: string) => workshop.put(`/api/teardowns/${td}/measurements`, { componentId, key, value, ...(unit ? { unit } : {}) })
    // Tolerance boundaries are in; just past is out.
    expect((await put(rod1.componentId, 'bolt_stretch', 0.16)).body.verdict).toBe('in')
    expect((await put(crank.componentId, 'main_journal_d', 54.985)).body.verdict).toBe('in')
    expect((await put(rod1.componentId, 'big_end_clearance', 0.07)).body.verdict).toBe('high')
    // 22 005 um is 22.005 mm, stored in the characteristic's unit.
    const um = await put(rod1.componentId, 'small_end_bore', 22005, 'um')
    expect([um.body.value, um.body.unit, um.body.verdict]).toEqual([22.005, 'mm', 'in'])
    // Correcting a reading replaces it: one row per part and characteristic.
    expect((await put(crank.componentId, 'main_journal_d', 54.984)).body.verdict).toBe('low')
    expect((await put(crank.componentId, 'main_journal_d', 54.99)).body.verdict).toBe('in')
    expect(await db()('teardown_measurements').where({ teardown_id: td, component_id: crank.componentId }).count({ n: '*' }).first()).toEqual({ n: 1 })

    // Bad readings: implausible (big-end clearance plausible to 0.04 + 10 x 0.032 = 0.36 mm), unknown key, wrong unit.
    const implausible = await put(piston1.componentId, 'piston_clearance', 6.5)
    expect(implausible.status).toBe(400)
    expect(implausible.body.message).toMatch(/^Invalid input: value: 6\.5 mm is outside the plausible range/)
    expect(await db()('teardown_measurements').where({ teardown_id: td, component_id: piston1.componentId }).first()).toBeUndefined()
    const far = await put(rod1.componentId, 'big_end_clearance', 0.361)
    expect(far.status).toBe(400)
    expect(Number((await db()('teardown_measurements').where({ teardown_id: td, component_id: rod1.componentId, characteristic_key: 'big_end_clearance' }).first()).value)).toBe(0.07)
    const badKey = await put(rod1.componentId, 'cam_lift', 1)
    expect(badKey.status).toBe(400)
    expect(badKey.body.message).toMatch(/key: Connecting rod has no characteristic "cam_lift"/)
    expect((await put(rod1.componentId, 'bolt_stretch', 1, 'N')).body.message).toMatch(/unit: Rod bolt stretch is measured in mm/)
    const otherEnginePart = await db()('installations as i').join('engines as e', 'e.id', 'i.engine_id').where({ 'e.serial': 'KT4-2101', 'i.position': 'rod-1' }).whereNull('i.to_at').first('i.component_id')
    expect((await put(otherEnginePart.component_id, 'bolt_stretch', 0.15)).body.message).toMatch(/componentId: .* is not part of KT4-2104/)

    // An out-of-tolerance part needs a finding before sign-off.
    const early = await workshop.post(`/api/teardowns/${td}/submit`)
    expect(early.status).toBe(409)
    expect(early.body.message).toMatch(/Conrod 1 .*big_end_clearance is out of tolerance \(high\) and needs a finding/)
    expect((await workshop.post(`/api/teardowns/${td}/findings`, { componentId: rod1.componentId, condition: 'melted', disposition: 'replace' })).body.message).toMatch(/condition: must be one of/)
    const finding = await workshop.post(`/api/teardowns/${td}/findings`, { componentId: rod1.componentId, condition: 'scored', note: 'Big-end shell scored, clearance open', disposition: 'replace' })
    expect(finding.status).toBe(201)
    expect((await workshop.post(`/api/teardowns/${td}/findings`, { componentId: rod1.componentId, condition: 'scored', disposition: 'replace' })).status).toBe(409)

    // Photos: a real PNG and a real JPEG pass; a renamed text file and an oversized file fail and leave nothing.
    const photoPath = `/api/teardowns/${td}/findings/${finding.body.id}/photos`
    const png = tinyPng()
    const p1 = await upload(workshop, photoPath, png, 'rod1.png', 'image/png')
    expect(p1.status, JSON.stringify(p1.body)).toBe(201)
    expect([p1.body.contentType, p1.body.width, p1.body.height, p1.body.sizeBytes]).toEqual(['image/png', 3, 2, png.length])
    const p2 = await upload(workshop, photoPath, tinyJpeg(), 'rod1.jpg', 'image/jpeg')
    expect(p2.status, JSON.stringify(p2.body)).toBe(201)
    expect([p2.body.contentType, p2.body.width, p2.body.height]).toEqual(['image/jpeg', 8, 8])
    const served = await fetch(`${BASE}${p1.body.url}`, { headers: { cookie: workshop.cookie } })
    expect(served.headers.get('content-type')).toBe('image/png')
    expect(Buffer.from(await served.arrayBuffer()).equals(png)).toBe(true)
    expect((await fetch(`${BASE}${p1.body.url}`, { headers: { cookie: teamMechanic.cookie } })).status).toBe(404)

    const filesBefore = filesIn(PHOTO_DIR)
    const rowsBefore = (await db()('teardown_photos').count({ n: '*' }).first())!.n
    expect(filesBefore).toBeGreaterThanOrEqual(2)
    const text = await upload(workshop, photoPath, Buffer.from('not a picture at all, only words\n'), 'crack.png', 'image/png')
    expect(text.status).toBe(400)
    expect(text.body.message).toMatch(/file: crack\.png is not a PNG, JPEG or WebP image/)
    const big = Buffer.alloc(8 * 1024 * 1024 + 1, 0)
    big.set(png.subarray(0, 24))
    const huge = await upload(workshop, photoPath, big, 'big.png', 'image/png')
    expect(huge.status).toBe(413)
    expect(huge.body.message).toMatch(/file: the file is larger than 8 MB/)
    expect(filesIn(PHOTO_DIR)).toBe(filesBefore)
    expect((await db()('teardown_photos').count({ n: '*' }).first())!.n).toBe(rowsBefore)

    // The finding says replace: sign-off waits for the swap.
    expect((await workshop.post(`/api/teardowns/${td}/submit`)).body.message).toMatch(/Conrod 1 .*says replace but the part is still fitted/)

    // Bad swaps change nothing.
    const rod1Inst = await db()('installations').where({ engine_id: engine.id, position: 'rod-1' }).whereNull('to_at').first()
    const crankSpare = await newSpare('KT4-CRK')
    const wrongType = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: crankSpare, reason: 'scored big end', removedDisposition: 'serviceable' })
    expect(wrongType.status).toBe(400)
    expect(wrongType.body.message).toMatch(/serial: .* is a Crankshaft .*Conrod 1 takes a Connecting rod/)
    const otherSerial = (await db()('components').where('id', otherEnginePart.component_id).first()).serial
    const elsewhere = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: otherSerial, reason: 'scored big end', removedDisposition: 'serviceable' })
    expect(elsewhere.status).toBe(409)
    expect(elsewhere.body.message).toMatch(/already installed in KT4-2101 at rod-1/)
    const rodSpare = await newSpare('KT4-ROD')
    const noReason = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: rodSpare })
    expect(noReason.status).toBe(400)
    expect(noReason.body.message).toMatch(/reason/)
    // Not enough life for the 40 h plan: a warning that needs an override reason.
    const warned = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: rodSpare, reason: 'scored big end', removedDisposition: 'serviceable' })
    expect(warned.status).toBe(409)
    expect(warned.body.message).toMatch(/overrideReason: .* is projected at \d+ % of its life limit after Touring round/)
    expect(warned.body.data.needsOverride).toBe(true)
    expect((await db()('installations').where('id', rod1Inst.id).first()).to_at).toBeNull()
    expect((await db()('components').where('id', rod1Inst.component_id).first()).status).toBe('installed')
    expect((await db()('components').where('serial', rodSpare).first()).status).toBe('serviceable')
    expect(await db()('teardown_swaps').where('teardown_id', td).first()).toBeUndefined()

    const swapped = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: rodSpare, reason: 'scored big end', overrideReason: 'Plan will be cut to a 3 h test before the event', removedDisposition: 'serviceable' })
    expect(swapped.status, JSON.stringify(swapped.body)).toBe(201)
    expect(swapped.body.removedStatus).toBe('serviceable') // disposition replace: back to the shelf as a spare
    const swapRow = await db()('teardown_swaps').where('id', swapped.body.id).first()
    expect(swapRow.override_reason).toBe('Plan will be cut to a 3 h test before the event')
    expect(swapRow.life_warning).toMatch(/projected/)
    expect((await db()('components').where('id', rod1Inst.component_id).first()).status).toBe('serviceable')

    // Without the heavy plan a fresh spare fits with no warning; a scrapped finding sends the old part to scrap.
    expect((await managerC.delete(`/api/events/${nextEvent.id}/plans/${engine.id}`)).status).toBe(200)
    const piston2 = sheet.parts.find((p: any) => p.position === 'piston-2')
    expect((await workshop.post(`/api/teardowns/${td}/findings`, { componentId: piston2.componentId, condition: 'cracked', note: 'Crack at the pin boss', disposition: 'scrap' })).status).toBe(201)
    const pistonSpare = await newSpare('KT4-PST')
    const swap2 = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'piston-2', serial: pistonSpare, reason: 'cracked at pin boss', removedDisposition: 'scrapped' })
    expect(swap2.status, JSON.stringify(swap2.body)).toBe(201)
    expect([swap2.body.removedStatus, swap2.body.lifeWarning]).toEqual(['scrapped', null])
    // The removed part is no longer fitted anywhere and the fitted one is not a spare any more.
    const refit = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'piston-3', serial: pistonSpare, reason: 'try', removedDisposition: 'serviceable' })
    expect(refit.status).toBe(409)

    // Sign-off: never by the person who opened or measured; a second person may.
    expect((await workshop.post(`/api/teardowns/${td}/submit`)).status).toBe(200)
    expect((await workshop.put(`/api/teardowns/${td}/measurements`, { componentId: crank.componentId, key: 'crankpin_d', value: 48 })).status).toBe(409)
    const self = await workshop.post(`/api/teardowns/${td}/sign-off`, { confirm: true })
    expect(self.status).toBe(403)
    expect(self.body.message).toMatch(/You opened this teardown: a second person/)
    expect((await teamMechanic.post(`/api/teardowns/${td}/sign-off`, { confirm: true })).status).toBe(404)
    expect((await managerC.post(`/api/teardowns/${td}/sign-off`, { confirm: true })).status).toBe(403)
    expect((await engineer.post(`/api/teardowns/${td}/sign-off`, {})).body.message).toMatch(/confirm/)
    expect((await db()('teardowns').where('id', td).first()).state).toBe('awaiting sign-off')
    await signOff(td, engineer)

    const done = await db()('teardowns').where('id', td).first()
    const after = await engineRow(ENGINE)
    expect([done.state, after.status, after.location]).toEqual(['signed off', 'active', 'shelf'])
    expect(new Date(after.rebuilt_at).getTime()).toBe(Math.floor(new Date(done.signed_at).getTime() / 1000) * 1000) // rebuilt_at has second precision
    const openParts = await db()('installations as i').join('components as c', 'c.id', 'i.component_id').where('i.engine_id', engine.id).whereNull('i.to_at').select('c.inspection_cleared_at')
    expect(openParts.every((p: any) => p.inspection_cleared_at && new Date(p.inspection_cleared_at).getTime() === new Date(done.signed_at).getTime())).toBe(true)
    const engineAfter = (await engineer.get(`/api/engines/${engine.id}`)).body
    expect(engineAfter.hoursSinceRebuild).toBe(0)
    expect(engineAfter.totalHours).toBeCloseTo(before.totalHours, 9)

    // Life follows the part: every part's hours are the same as before the teardown, removed ones too.
    for (const [componentId, hours] of hoursBefore) {
      const part = (await engineer.get(`/api/parts/${componentId}`)).body.part
      expect(part.hours, `part ${componentId}`).toBeCloseTo(hours, 9)
    }
    const fitted = engineAfter.parts.find((p: any) => p.position === 'rod-1')
    expect([fitted.serial, fitted.hours]).toEqual([rodSpare, 0])

    // The installation history rebuilds the build at any moment, and agrees with the rows.
    const insts = await installations(engine.id)
    const swapAt = new Date(swapped.body.at)
    for (const at of [new Date(swapAt.getTime() - 1), swapAt, new Date()]) {
      const fromDomain = buildAt(engine.id, at.toISOString(), insts).map((i) => `${i.position}:${i.componentId}`).sort()
      expect(fromDomain).toEqual(await buildFromDb(engine.id, at))
    }
    const beforeSwap = buildAt(engine.id, new Date(swapAt.getTime() - 1).toISOString(), insts)
    const afterSwap = buildAt(engine.id, swapAt.toISOString(), insts)
    expect(beforeSwap.find((i) => i.position === 'rod-1')!.componentId).toBe(rod1Inst.component_id)
    expect(afterSwap.find((i) => i.position === 'rod-1')!.componentId).toBe((await db()('components').where('serial', rodSpare).first()).id)
    expect(afterSwap).toHaveLength(beforeSwap.length)

    // Every step is in the audit log.
    const actions = (await db()('audit_log').whereIn('entity', ['teardown', 'teardown_swap', 'teardown_finding', 'teardown_photo']).whereRaw("(JSON_VALUE(after_value, '$.teardown') = ? OR (entity = 'teardown' AND entity_id = ?) OR entity = 'teardown_photo')", [td, String(td)]).select('entity', 'action')).map((a: any) => `${a.entity}:${a.action}`)
    for (const a of ['teardown:open', 'teardown:submit', 'teardown:sign-off', 'teardown_finding:create', 'teardown_photo:upload', 'teardown_swap:swap']) expect(actions).toContain(a)
    expect(await db()('audit_log').where({ entity: 'engine', entity_id: String(engine.id), action: 'rebuilt' }).first()).toBeTruthy()

    // The supplier's fleet view counts the findings by type and condition.
    const fleet = (await engineer.get('/api/teardowns/findings')).body
    const rods = fleet.find((t: any) => t.code === 'KT4-ROD')
    expect(rods.conditions.find((c: any) => c.condition === 'scored').count).toBeGreaterThanOrEqual(1)
    expect(rods.rows.find((r: any) => r.teardownId === td).hours).toBeCloseTo(hoursBefore.get(rod1Inst.component_id)!, 9)
    expect((await managerC.get('/api/teardowns/findings')).status).toBe(403)
  })

  it('reports wear per running hour and hours left, matching a hand-computed line and simple-statistics', async () => {
    const rod2 = (await db()('installations').where({ engine_id: engine.id, position: 'rod-2' }).whereNull('to_at').first()).component_id
    // Three teardowns 10 h and 5 h of running apart. Big-end clearance opens 0.0004 mm/h (hand-computed:
    // 0.030 -> 0.034 over 10 h -> 0.036 over 5 h); from the last reading it reaches max 0.060 in (0.060 - 0.036) / 0.0004 = 60 h.
    const clearance = [0.03, 0.034, 0.036]
    const bore = [22.004, 22.0052, 22.0061] // scattered: checked against linearRegression
    const gaps = [10, 5]
    for (let k = 0; k < 3; k++) {
      const start = await workshop.post('/api/teardowns', { engineId: engine.id, reason: 'scheduled' })
      expect(start.status, JSON.stringify(start.body)).toBe(201)
      const td = start.body.id
      expect((await workshop.put(`/api/teardowns/${td}/measurements`, { componentId: rod2, key: 'big_end_clearance', value: clearance[k] })).status).toBe(200)
      expect((await workshop.put(`/api/teardowns/${td}/measurements`, { componentId: rod2, key: 'small_end_bore', value: bore[k] })).status).toBe(200)
      expect((await workshop.post(`/api/teardowns/${td}/submit`)).status).toBe(200)
      await signOff(td, engineer)
      await pause(5)
      if (k < 2) {
        await manualSession(managerC, engine.id, gaps[k]!)
        await pause(5)
      }
    }
    const wear = await engineer.get(`/api/parts/${rod2}/wear`)
    expect(wear.status).toBe(200)
    const c = wear.body.characteristics.find((x: any) => x.key === 'big_end_clearance')
    expect(c.points).toHaveLength(3)
    const [h0, h1, h2] = c.points.map((p: any) => p.hours)
    expect(h1 - h0).toBeCloseTo(10, 9)
    expect(h2 - h1).toBeCloseTo(5, 9)
    expect(c.slopePerHour).toBeCloseTo(0.0004, 12)
    expect(c.towards).toBe('max')
    expect(wear.body.currentHours).toBeCloseTo(h2, 9)
    expect(c.hoursLeft).toBeCloseTo(60, 6)

    const b = wear.body.characteristics.find((x: any) => x.key === 'small_end_bore')
    const ref = ss.linearRegression(b.points.map((p: any) => [p.hours, p.value]))
    expect(b.slopePerHour).toBeCloseTo(ref.m, 12)
    expect(b.intercept).toBeCloseTo(ref.b, 9)
    // hours left from the regression line to max 22.012 mm, by hand from ss's line
    expect(b.hoursLeft).toBeCloseTo((22.012 - ref.b) / ref.m - wear.body.currentHours, 6)
    // The wear of a part is private to its team and the supplier.
    expect((await teamMechanic.get(`/api/parts/${rod2}/wear`)).status).toBe(404)
  })
})
