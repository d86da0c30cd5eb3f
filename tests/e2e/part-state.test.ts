// The state a part leaves an engine in, the supplier's concession that releases it, and what a
// teardown does to the engine's coming assignments; on KT4-2201 (Marlowe's touring engine, which no
// other e2e file changes) and a past event this file creates.
import { beforeAll, describe, expect, it } from 'vitest'
import { Client, USERS, db, signIn, uniqueEmail } from './helpers'

const ENGINE = 'KT4-2201'
const HOUR = 3_600_000

let engine: any
let kt4: any
let workshop: Client
let engineer: Client
let admin: Client
let managerA: Client
let raceA: Client
let mechanicA: Client
let managerB: Client

async function histogramFor(seconds: number) {
  const bands = Math.ceil((kt4.revLimitRpm + 1000) / kt4.bandWidthRpm)
  const histogram = Array(bands).fill(0)
  histogram[Math.floor(kt4.referenceRpm / kt4.bandWidthRpm)] = seconds
  return histogram
}
let spareCounter = 0
async function newSpare(typeCode: string) {
  const ct = await db()('component_types').where('code', typeCode).first()
  spareCounter += 1
  const serial = `PST-${typeCode}-${Date.now().toString(36)}-${spareCounter}`
  await db()('components').insert({ supplier_id: ct.supplier_id, component_type_id: ct.id, serial, status: 'serviceable', born_at: new Date(Date.now() - 86_400_000) })
  return serial
}
const fittedAt = async (position: string) => db()('installations').where({ engine_id: engine.id, position }).whereNull('to_at').first()

beforeAll(async () => {
  ;[workshop, engineer, admin, managerA, raceA, mechanicA, managerB] = await Promise.all([
    signIn(USERS.supplierMechanic), signIn(USERS.supplierEngineer), signIn(USERS.admin), signIn(USERS.managerA), signIn(USERS.raceA), signIn(USERS.mechanicA), signIn(USERS.managerB),
  ])
  engine = await db()('engines').where('serial', ENGINE).first()
  kt4 = (await engineer.get('/api/engine-types')).body.find((t: any) => t.code === 'KT4-20')
})

describe('planning: past events and engines taken off their coming events', () => {
  it('lists the engines that ran a past event, with their sessions, to those who may see them', async () => {
    const startsAt = new Date(Date.now() - 5 * 24 * HOUR)
    const ev = await engineer.post('/api/events', { name: 'Saltmarsh Sprint', series: kt4.series, track: 'Saltmarsh Ring', trackLengthKm: 3.4, startsAt: startsAt.toISOString(), endsAt: new Date(startsAt.getTime() + 30 * HOUR).toISOString() })
    expect(ev.status, JSON.stringify(ev.body)).toBe(201)
    const ran = []
    for (const [kind, offsetH, seconds] of [['qualifying', 2, 1200], ['race', 26, 2700]] as const) {
      const r = await raceA.post('/api/sessions', { engineId: engine.id, eventId: ev.body.id, kind, startedAt: new Date(startsAt.getTime() + offsetH * HOUR).toISOString(), runningSeconds: seconds, distanceKm: 0, histogram: await histogramFor(seconds), overRevs: [] })
      expect(r.status, JSON.stringify(r.body)).toBe(201)
      ran.push(r.body.id)
    }
    const mine = (await managerA.get('/api/events')).body.find((e: any) => e.id === ev.body.id)
    expect(mine.ran).toHaveLength(1)
    expect(mine.ran[0]).toMatchObject({ engineId: engine.id, engineSerial: ENGINE, teamName: 'Marlowe Vane Racing', runningSeconds: 3900 })
    expect(mine.ran[0].sessions.map((s: any) => [s.id, s.kind, s.runningSeconds])).toEqual([[ran[0], 'qualifying', 1200], [ran[1], 'race', 2700]])
    // The supplier sees it too; another team sees the event but not Marlowe's engine.
    expect((await engineer.get('/api/events')).body.find((e: any) => e.id === ev.body.id).ran.map((r: any) => r.engineSerial)).toEqual([ENGINE])
    const other = (await managerB.get('/api/events')).body.find((e: any) => e.id === ev.body.id)
    expect(other.ran).toEqual([])
  })
})

describe('a removed part leaves in a stated state, and a concession releases it', () => {
  let td: number
  let rod: any
  let rodSerial: string
  let findingId: number

  it('takes an engine going into teardown off its coming assignment and tells its team manager once', async () => {
    const coming = (await db()('events').where('series', kt4.series).where('starts_at', '>', new Date()).orderBy('starts_at').first())!
    const plan = await managerA.put(`/api/events/${coming.id}/plans/${engine.id}`, { chassis: 'MVR-T-05', plannedSeconds: 3600, plannedKm: null })
    expect(plan.status, JSON.stringify(plan.body)).toBe(200)

    // An over-rev into band C (8200 rpm and up on this type): the conrods' immediate-inspection band.
    const overRev = await raceA.post('/api/sessions', { engineId: engine.id, eventId: null, kind: 'test', startedAt: new Date(Date.now() - HOUR).toISOString(), runningSeconds: 600, distanceKm: 0, histogram: await histogramFor(600), overRevs: [{ bandId: 'C', peakRpm: 8420, durationS: 0.3 }] })
    expect(overRev.status, JSON.stringify(overRev.body)).toBe(201)

    const start = await workshop.post('/api/teardowns', { engineId: engine.id, reason: 'over-rev inspection', note: null })
    expect(start.status, JSON.stringify(start.body)).toBe(201)
    td = start.body.id
    // The demo assigns every car's engine to the next two events of its series; the one above updated the first.
    expect(start.body.releasedPlans).toBe(2)
    expect(await db()('event_plans as p').join('events as ev', 'ev.id', 'p.event_id').where('p.engine_id', engine.id).where('ev.ends_at', '>', new Date()).first()).toBeUndefined()
    expect((await managerA.get('/api/events')).body.find((e: any) => e.id === coming.id).plans.some((p: any) => p.engineId === engine.id)).toBe(false)
    // It cannot be put back on the car while it is in teardown.
    expect((await managerA.put(`/api/events/${coming.id}/plans/${engine.id}`, { chassis: 'MVR-T-05', plannedSeconds: null, plannedKm: null })).status).toBe(409)

    const alerts = await db()('alerts').where({ engine_id: engine.id, kind: 'plan-released' })
    expect(alerts).toHaveLength(1)
    expect(alerts[0].title).toBe(`${ENGINE} went into teardown: taken off 2 coming events`)
    const manager = await db()('users').where('email', USERS.managerA).first()
    const mails = await db()('mail_outbox').where('alert_id', alerts[0].id)
    expect(mails.map((m: any) => m.to_address)).toEqual([USERS.managerA])
    expect(mails[0].text).toContain(coming.name)
    expect(await db()('alert_recipients').where('alert_id', alerts[0].id).select('user_id')).toEqual([{ user_id: manager.id }])
    // The team manager sees it in the app; another team does not.
    expect((await managerA.get('/api/alerts')).body.some((a: any) => a.id === Number(alerts[0].id))).toBe(true)
    expect((await managerB.get('/api/alerts')).body.some((a: any) => a.id === Number(alerts[0].id))).toBe(false)
  })

  it('suggests quarantine for parts removed after an over-rev, and refuses a swap that does not say', async () => {
    const sheet = (await workshop.get(`/api/teardowns/${td}`)).body
    rod = sheet.parts.find((p: any) => p.position === 'rod-1')
    rodSerial = rod.serial
    expect(rod.suggestedDisposition).toBe('quarantined')
    expect(rod.suggestionReasons).toContain('an over-rev calls for inspection of this part')
    // one C event against an allowance of 1 (the seeded KT4-ROD limit): 100 %, at its limit
    expect(rod.suggestionReasons).toContain('the part is at 100 % of a limit')
    // A piston has no inspection band of its own, but the engine's open verdict holds it too.
    expect(sheet.parts.find((p: any) => p.position === 'piston-1').suggestedDisposition).toBe('quarantined')

    const spare = await newSpare('KT4-ROD')
    const before = await fittedAt('rod-1')
    const missing = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: spare, reason: 'over-rev into band C' })
    expect(missing.status).toBe(400)
    expect(missing.body.message).toMatch(/^Invalid input: removedDisposition: say what state .+ leaves the engine in: serviceable, quarantined, scrapped$/)
    const wrong = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: spare, reason: 'over-rev into band C', removedDisposition: 'on the shelf' })
    expect(wrong.status).toBe(400)
    expect(wrong.body.message).toContain('removedDisposition')
    expect((await fittedAt('rod-1')).id).toBe(before.id)

    // A finding that sends the rod to the lab: it may not go back to the shelf as serviceable.
    const finding = await workshop.post(`/api/teardowns/${td}/findings`, { componentId: rod.componentId, condition: 'discoloured (heat)', note: 'Big-end bore blued after the over-rev', disposition: 'send-to-lab' })
    expect(finding.status, JSON.stringify(finding.body)).toBe(201)
    findingId = finding.body.id
    const toShelf = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: spare, reason: 'over-rev into band C', removedDisposition: 'serviceable' })
    expect(toShelf.status).toBe(409)
    expect(toShelf.body.message).toContain('the teardown finding says send-to-lab')

    const swap = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-1', serial: spare, reason: 'over-rev into band C', removedDisposition: 'quarantined' })
    expect(swap.status, JSON.stringify(swap.body)).toBe(201)
    expect(swap.body.removedStatus).toBe('quarantined')
    expect((await db()('components').where('id', rod.componentId).first()).status).toBe('quarantined')
    expect((await db()('installations').where('id', before.id).first()).removed_status).toBe('quarantined')
  })

  it('refuses to fit a quarantined part, in a swap or directly', async () => {
    const viaSwap = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-2', serial: rodSerial, reason: 'try the held rod', removedDisposition: 'serviceable' })
    expect(viaSwap.status).toBe(409)
    expect(viaSwap.body.message).toBe(`${rodSerial} is quarantined pending inspection and cannot be fitted; the supplier engineer can release it with a concession on the part's page`)
    expect((await fittedAt('rod-2')).to_at).toBeNull() // the swap's removal was undone with it
    const direct = await workshop.post(`/api/engines/${engine.id}/installations`, { position: 'rod-2', serial: rodSerial })
    expect(direct.status).toBe(409)
    expect(direct.body.message).toContain('quarantined pending inspection')
  })

  it('lets only the supplier engineer or an admin grant a concession, and hides the part from another supplier', async () => {
    const body = { reason: 'Crack-tested and measured after the over-rev: within drawing limits', limitOverRev: { C: 2 }, findingIds: [] }
    for (const c of [managerA, raceA, mechanicA, workshop, managerB]) {
      expect((await c.post(`/api/parts/${rod.componentId}/concessions`, body)).status).toBe(403)
    }
    // An engineer of another supplier: the part is not theirs, so it does not exist for them.
    const org = await admin.post('/api/organisations', { name: `Ashgrove Powertrain ${Date.now().toString(36)}`, kind: 'supplier' })
    expect(org.status, JSON.stringify(org.body)).toBe(201)
    const email = uniqueEmail('other-supplier')
    const user = await admin.post('/api/users', { email, name: 'Other Supplier Engineer', role: 'supplier_engineer', organisationId: org.body.id, password: 'ashgrove-bench-2026' })
    expect(user.status, JSON.stringify(user.body)).toBe(201)
    const otherEngineer = await signIn(email, 'ashgrove-bench-2026')
    expect((await otherEngineer.post(`/api/parts/${rod.componentId}/concessions`, body)).status).toBe(404)
    expect((await otherEngineer.get(`/api/parts/${rod.componentId}`)).status).toBe(404)
    expect((await db()('part_concessions').where('component_id', rod.componentId)).length).toBe(0)
  })

  it('releases the part with a recorded concession and a new limit for its serial, shown in its history', async () => {
    const noReason = await engineer.post(`/api/parts/${rod.componentId}/concessions`, { findingIds: [] })
    expect(noReason.status).toBe(400)
    expect(noReason.body.message).toContain('reason')
    // At 100 % of its band C allowance: releasing it without a new limit for that band is refused.
    const noLimit = await engineer.post(`/api/parts/${rod.componentId}/concessions`, { reason: 'Crack-tested and measured: fine', findingIds: [findingId] })
    expect(noLimit.status).toBe(400)
    expect(noLimit.body.message).toMatch(/^Invalid input: limitOverRev\.C: .+ is at 100 % of its/)
    const tooLow = await engineer.post(`/api/parts/${rod.componentId}/concessions`, { reason: 'Crack-tested and measured: fine', limitOverRev: { C: 1 }, findingIds: [] })
    expect(tooLow.status).toBe(400)
    expect(tooLow.body.message).toContain('limitOverRev.C')
    const foreignFinding = await engineer.post(`/api/parts/${rod.componentId}/concessions`, { reason: 'Crack-tested and measured: fine', limitOverRev: { C: 2 }, findingIds: [999_999] })
    expect(foreignFinding.status).toBe(400)
    expect(foreignFinding.body.message).toContain('findingIds')
    expect((await db()('components').where('id', rod.componentId).first()).status).toBe('quarantined')

    const reason = 'Crack-tested and measured after the over-rev: big-end bore within drawing limits'
    const granted = await engineer.post(`/api/parts/${rod.componentId}/concessions`, { reason, limitOverRev: { C: 2 }, findingIds: [findingId] })
    expect(granted.status, JSON.stringify(granted.body)).toBe(201)
    expect(granted.body).toMatchObject({ statusBefore: 'quarantined', statusAfter: 'serviceable', serialLimits: { overRevEvents: { C: 2 } } })
    expect((await db()('components').where('id', rod.componentId).first()).status).toBe('serviceable')
    const audit = await db()('audit_log').where({ entity: 'component', entity_id: String(rod.componentId), action: 'concession' })
    expect(audit).toHaveLength(1)

    const part = (await engineer.get(`/api/parts/${rod.componentId}`)).body
    // One band C event against the serial's new allowance of 2: 50 % (1 / 2).
    const c = part.part.measures.find((m: any) => m.kind === 'overRev' && m.bandId === 'C')
    expect([c.used, c.limit, c.fraction]).toEqual([1, 2, 0.5])
    expect(part.part.immediateInspection).toBe(false)
    expect(part.part.componentStatus).toBe('serviceable')
    expect(part.concessions).toHaveLength(1)
    expect(part.concessions[0]).toMatchObject({ grantedByName: expect.any(String), reason, statusBefore: 'quarantined', statusAfter: 'serviceable', fractionBefore: 1 })
    expect(part.concessions[0].limits.overRevEvents).toEqual({ C: 2 })
    expect(part.concessions[0].findings).toEqual([{ id: findingId, teardownId: td, condition: 'discoloured (heat)', note: 'Big-end bore blued after the over-rev', disposition: 'send-to-lab' }])
    const removal = part.installations.find((i: any) => i.to !== null && i.engineSerial === ENGINE)
    expect(removal.removedStatus).toBe('quarantined')

    // Released, it fits again (into rod-2, whose rod goes to the shelf).
    const refit = await workshop.post(`/api/teardowns/${td}/swaps`, { position: 'rod-2', serial: rodSerial, reason: 'released rod refitted', removedDisposition: 'quarantined', overrideReason: 'released by concession' })
    expect(refit.status, JSON.stringify(refit.body)).toBe(201)
    expect(refit.body.fittedSerial).toBe(rodSerial)
  })

  it('refuses a concession on a part that is serviceable and within its limits', async () => {
    const spare = await newSpare('KT4-PST')
    const id = (await db()('components').where('serial', spare).first()).id
    const r = await engineer.post(`/api/parts/${id}/concessions`, { reason: 'Nothing to release here at all', findingIds: [] })
    expect(r.status).toBe(409)
    expect(r.body.message).toBe(`${spare} is serviceable and within its limits: there is nothing to release`)
  })
})
