// The demo fleet, mid-season: two engine types of our own design, their life-limited parts,
// thirteen engines spread from fresh to due, past sessions with rev histograms, and a calendar
// with a 12-hour race still to come. Every name here is invented.
import type { Knex } from 'knex'
import { engineTypeRow, makeEngineType, makeOverRevBands, rng, tracedSessionRow } from '../fixtures'
import { syntheticTrace, type PlannedExcursion } from './traces'

// Over-rev bands relative to the rev limit, in the usual steps: logged only, inspect the valve train, teardown.
export const ENGINE_TYPES = [
  makeEngineType({
    code: 'KV8-45', name: 'V8 4.5 l naturally aspirated', series: 'Meridian Endurance GT', layout: 'V8, 90 degree, flat-plane crank',
    cylinders: 8, boreMm: 94, strokeMm: 81, conrodMm: 140, reciprocatingMassKg: 0.52,
    revLimitRpm: 9200, idleRpm: 1500, bandWidthRpm: 500, referenceRpm: 8500,
    overRevBands: makeOverRevBands([['A', 9300, 0.2, 'Logged (+1 %)'], ['B', 9500, 0.1, 'Inspect valve train (+3 %)'], ['C', 9900, 0, 'Teardown (+7.6 %)']]), lowOilPressure: { belowBar: 2.0, aboveRpm: 4000, minDurationS: 0.5 },
  }),
  makeEngineType({
    code: 'KT4-20', name: 'Inline four 2.0 l turbocharged', series: 'Coastline Touring Cup', layout: 'Inline four, turbocharged',
    cylinders: 4, boreMm: 86, strokeMm: 86, conrodMm: 144, reciprocatingMassKg: 0.61,
    revLimitRpm: 7600, idleRpm: 1200, bandWidthRpm: 500, referenceRpm: 7000,
    overRevBands: makeOverRevBands([['A', 7700, 0.2, 'Logged (+1 %)'], ['B', 7900, 0.1, 'Inspect valve train (+4 %)'], ['C', 8200, 0, 'Teardown (+8 %)']]), lowOilPressure: { belowBar: 1.8, aboveRpm: 3500, minDurationS: 0.5 },
  }),
]

/** Average speed over a session in each engine type's series (km/h), for the demo sessions' distances. */
const AVG_SPEED_KMH: Record<string, number> = { 'KV8-45': 158, 'KT4-20': 132 }

interface SeedComponentType {
  code: string
  name: string
  category: string
  limit_hours: number | null
  limit_km: number | null
  limit_eq_hours: number | null
  limit_over_rev: Record<string, number>
  immediate_inspection_band: string | null
  damage_exponent: number
  characteristics: { key: string; label: string; unit: string; nominal: number; min: number; max: number }[]
}

const crankChars = [
  { key: 'main_journal_d', label: 'Main journal diameter', unit: 'mm', nominal: 55.0, min: 54.985, max: 55.005 },
  { key: 'crankpin_d', label: 'Crankpin diameter', unit: 'mm', nominal: 48.0, min: 47.985, max: 48.005 },
  { key: 'main_clearance', label: 'Main bearing clearance', unit: 'mm', nominal: 0.045, min: 0.03, max: 0.065 },
]
const rodChars = [
  { key: 'big_end_ovality', label: 'Big-end bore ovality', unit: 'mm', nominal: 0.0, min: 0.0, max: 0.008 },
  { key: 'small_end_bore', label: 'Small-end bore', unit: 'mm', nominal: 22.005, min: 22.0, max: 22.012 },
  { key: 'bolt_stretch', label: 'Rod bolt stretch', unit: 'mm', nominal: 0.15, min: 0.14, max: 0.16 },
  { key: 'big_end_clearance', label: 'Big-end bearing clearance', unit: 'mm', nominal: 0.04, min: 0.028, max: 0.06 },
]
const pistonChars = [
  { key: 'piston_clearance', label: 'Piston-to-bore clearance', unit: 'mm', nominal: 0.06, min: 0.045, max: 0.085 },
  { key: 'ring_gap', label: 'Top ring end gap', unit: 'mm', nominal: 0.3, min: 0.25, max: 0.45 },
]
const springChars = [{ key: 'spring_free_length', label: 'Spring free length', unit: 'mm', nominal: 42.0, min: 41.6, max: 42.2 }]

function typeSet(prefix: string, scale: number, km: number): SeedComponentType[] {
  return [
    { code: `${prefix}-CRK`, name: 'Crankshaft', category: 'Crank drive', limit_hours: 60 * scale, limit_km: km, limit_eq_hours: 55 * scale, limit_over_rev: { C: 2 }, immediate_inspection_band: null, damage_exponent: 13, characteristics: crankChars },
    { code: `${prefix}-ROD`, name: 'Connecting rod', category: 'Crank drive', limit_hours: 45 * scale, limit_km: null, limit_eq_hours: 42 * scale, limit_over_rev: { B: 6, C: 1 }, immediate_inspection_band: 'C', damage_exponent: 13, characteristics: rodChars },
    { code: `${prefix}-PST`, name: 'Piston with pin', category: 'Crank drive', limit_hours: 40 * scale, limit_km: null, limit_eq_hours: 40 * scale, limit_over_rev: {}, immediate_inspection_band: null, damage_exponent: 7, characteristics: pistonChars },
    { code: `${prefix}-BRG`, name: 'Bearing shell set', category: 'Crank drive', limit_hours: 30 * scale, limit_km: null, limit_eq_hours: null, limit_over_rev: {}, immediate_inspection_band: null, damage_exponent: 7, characteristics: [] },
    { code: `${prefix}-VSP`, name: 'Valve spring set', category: 'Valve train', limit_hours: 35 * scale, limit_km: null, limit_eq_hours: 34 * scale, limit_over_rev: { B: 5, C: 1 }, immediate_inspection_band: 'C', damage_exponent: 7, characteristics: springChars },
    { code: `${prefix}-TMG`, name: 'Timing drive', category: 'Timing drive', limit_hours: 60 * scale, limit_km: km, limit_eq_hours: null, limit_over_rev: {}, immediate_inspection_band: null, damage_exponent: 3, characteristics: [] },
  ]
}

const COMPONENT_TYPES: Record<string, SeedComponentType[]> = {
  'KV8-45': typeSet('KV8', 1.9, 16000),
  'KT4-20': [
    ...typeSet('KT4', 0.87, 6500),
    { code: 'KT4-TRB', name: 'Turbocharger', category: 'Turbocharger', limit_hours: 30, limit_km: null, limit_eq_hours: null, limit_over_rev: {}, immediate_inspection_band: null, damage_exponent: 0, characteristics: [] },
  ],
}

function positionsFor(code: string, cylinders: number) {
  const [prefix] = code.split('-')
  const p: { position: string; label: string; type: string }[] = [{ position: 'crank', label: 'Crankshaft', type: `${prefix}-CRK` }]
  for (let i = 1; i <= cylinders; i++) p.push({ position: `rod-${i}`, label: `Conrod ${i}`, type: `${prefix}-ROD` })
  for (let i = 1; i <= cylinders; i++) p.push({ position: `piston-${i}`, label: `Piston ${i}`, type: `${prefix}-PST` })
  p.push({ position: 'bearings', label: 'Main and big-end shells', type: `${prefix}-BRG` })
  p.push({ position: 'springs', label: 'Valve springs', type: `${prefix}-VSP` })
  p.push({ position: 'timing', label: 'Timing drive', type: `${prefix}-TMG` })
  if (prefix === 'KT4') p.push({ position: 'turbo', label: 'Turbocharger', type: 'KT4-TRB' })
  return p
}

const DAY = 86_400_000
/** The supplier's damage exponents in use (all its part types), as the fleet computation asks for them. */
const DEMO_EXPONENTS = [...new Set(Object.values(COMPONENT_TYPES).flat().map((c) => c.damage_exponent))].filter((p) => p !== 0)

export async function seedFleet(trx: Knex.Transaction, ctx: { supplierId: number; teams: Record<string, number>; now: Date }) {
  const rand = rng(20261202)
  const now = ctx.now.getTime()
  const typeIds: Record<string, number> = {}
  const ctIds: Record<string, number> = {}
  const positions: Record<string, ReturnType<typeof positionsFor>> = {}

  for (const t of ENGINE_TYPES) {
    const [id] = await trx('engine_types').insert({ ...engineTypeRow(t), supplier_id: ctx.supplierId })
    typeIds[t.code] = id!
    for (const ct of COMPONENT_TYPES[t.code]!) {
      const [cid] = await trx('component_types').insert({ ...ct, supplier_id: ctx.supplierId, limit_over_rev: JSON.stringify(ct.limit_over_rev), characteristics: JSON.stringify(ct.characteristics) })
      ctIds[ct.code] = cid!
    }
    positions[t.code] = positionsFor(t.code, t.cylinders)
    await trx('engine_type_positions').insert(positions[t.code]!.map((p, i) => ({ engine_type_id: id, position: p.position, label: p.label, component_type_id: ctIds[p.type], sort: i })))
  }

  // The calendar: rounds every three weeks, eight behind us and five to come per series.
  const calendars: Record<string, { name: string; track: string; km: number; hours: number | null }[]> = {
    'Meridian Endurance GT': [
      { name: 'Harrowmere 6 Hours', track: 'Harrowmere Circuit', km: 5.42, hours: null },
      { name: 'Vellacourt 500', track: 'Vellacourt Park', km: 4.18, hours: null },
      { name: 'Glenrook 4 Hours', track: 'Glenrook Raceway', km: 6.03, hours: null },
      { name: 'Ashby Fell 6 Hours', track: 'Ashby Fell Circuit', km: 5.11, hours: null },
      { name: 'Corran Bay 4 Hours', track: 'Corran Bay Autodrome', km: 4.77, hours: null },
      { name: 'Lindqvist Heath 6 Hours', track: 'Lindqvist Heath', km: 5.9, hours: null },
      { name: 'Pennock Ridge 500', track: 'Pennock Ridge Circuit', km: 4.35, hours: null },
      { name: 'Orrin Vale 4 Hours', track: 'Orrin Vale Raceway', km: 5.26, hours: null },
      { name: 'Tarnfield 6 Hours', track: 'Tarnfield Motor Park', km: 5.64, hours: 8 },
      { name: 'Saltmarsh 12 Hours', track: 'Saltmarsh Ring', km: 6.21, hours: 14.5 },
      { name: 'Brackenmoor 4 Hours', track: 'Brackenmoor Circuit', km: 4.92, hours: 6 },
      { name: 'Hollin Cross 6 Hours', track: 'Hollin Cross Raceway', km: 5.37, hours: 8 },
      { name: 'Season finale, Quarry Hill', track: 'Quarry Hill Circuit', km: 4.66, hours: 6 },
    ],
    'Coastline Touring Cup': [
      { name: 'Touring round 1, Dunmere', track: 'Dunmere Park', km: 3.21, hours: null },
      { name: 'Touring round 2, Kestle', track: 'Kestle Raceway', km: 2.95, hours: null },
      { name: 'Touring round 3, Ardwick', track: 'Ardwick Circuit', km: 3.64, hours: null },
      { name: 'Touring round 4, Selby Moor', track: 'Selby Moor', km: 3.08, hours: null },
      { name: 'Touring round 5, Fairhaven', track: 'Fairhaven Circuit', km: 3.47, hours: null },
      { name: 'Touring round 6, Mossgate', track: 'Mossgate Raceway', km: 2.88, hours: null },
      { name: 'Touring round 7, Pellow Point', track: 'Pellow Point', km: 3.33, hours: null },
      { name: 'Touring round 8, Wrenford', track: 'Wrenford Park', km: 3.12, hours: null },
      { name: 'Touring round 9, Caddon Hill', track: 'Caddon Hill', km: 3.56, hours: 3 },
      { name: 'Touring round 10, Eastry', track: 'Eastry Circuit', km: 3.02, hours: 3 },
      { name: 'Touring round 11, Hobb Lane', track: 'Hobb Lane Raceway', km: 3.39, hours: 3 },
      { name: 'Touring round 12, Marram Sands', track: 'Marram Sands', km: 3.74, hours: 3 },
      { name: 'Touring finale, Greywell', track: 'Greywell Park', km: 3.18, hours: 3 },
    ],
  }
  const events: Record<string, { id: number; startsAt: number; km: number }[]> = {}
  for (const [series, list] of Object.entries(calendars)) {
    events[series] = []
    for (let i = 0; i < list.length; i++) {
      const e = list[i]!
      const offsetDays = (i - 8) * 21 + (series.startsWith('Coastline') ? 7 : 0) + 3
      const startsAt = new Date(now + offsetDays * DAY)
      startsAt.setUTCHours(9, 0, 0, 0)
      const [id] = await trx('events').insert({
        supplier_id: ctx.supplierId,
        name: e.name,
        series,
        track: e.track,
        track_length_km: e.km,
        starts_at: startsAt,
        ends_at: new Date(startsAt.getTime() + 2 * DAY + 10 * 3600_000),
        planned_seconds: e.hours ? Math.round(e.hours * 3600) : null,
      })
      events[series]!.push({ id: id!, startsAt: startsAt.getTime(), km: e.km })
    }
  }

  const team = ctx.teams
  // Engines: which team, how many past rounds they have run, and what sets each apart.
  const fleet: { serial: string; type: string; team: string | null; rounds: number; location: 'car' | 'shelf' | 'supplier'; chassis: string | null; overRevC?: boolean; status?: 'active' }[] = [
    { serial: 'KV8-1101', type: 'KV8-45', team: 'Marlowe Vane Racing', rounds: 7, location: 'car', chassis: 'MVR-GT-214' },
    { serial: 'KV8-1102', type: 'KV8-45', team: 'Marlowe Vane Racing', rounds: 4, location: 'car', chassis: 'MVR-GT-215', overRevC: true },
    { serial: 'KV8-1103', type: 'KV8-45', team: 'Marlowe Vane Racing', rounds: 1, location: 'shelf', chassis: null },
    { serial: 'KV8-1201', type: 'KV8-45', team: 'Tidewater Apex Motorsport', rounds: 6, location: 'car', chassis: 'TAM-GT-08' },
    { serial: 'KV8-1202', type: 'KV8-45', team: 'Tidewater Apex Motorsport', rounds: 5, location: 'car', chassis: 'TAM-GT-09' },
    { serial: 'KV8-1203', type: 'KV8-45', team: 'Tidewater Apex Motorsport', rounds: 0, location: 'shelf', chassis: null },
    { serial: 'KV8-1001', type: 'KV8-45', team: null, rounds: 2, location: 'supplier', chassis: null },
    { serial: 'KT4-2101', type: 'KT4-20', team: 'Redfern Lattice Racing', rounds: 8, location: 'car', chassis: 'RLR-T-31' },
    { serial: 'KT4-2102', type: 'KT4-20', team: 'Redfern Lattice Racing', rounds: 5, location: 'car', chassis: 'RLR-T-32' },
    { serial: 'KT4-2103', type: 'KT4-20', team: 'Redfern Lattice Racing', rounds: 3, location: 'shelf', chassis: null },
    { serial: 'KT4-2104', type: 'KT4-20', team: 'Redfern Lattice Racing', rounds: 1, location: 'shelf', chassis: null },
    { serial: 'KT4-2201', type: 'KT4-20', team: 'Marlowe Vane Racing', rounds: 6, location: 'car', chassis: 'MVR-T-05' },
    { serial: 'KT4-2001', type: 'KT4-20', team: null, rounds: 0, location: 'supplier', chassis: null },
  ]

  let partCounter = 0
  const newPart = async (typeCode: string, born: Date, status: string) => {
    partCounter += 1
    const [id] = await trx('components').insert({
      supplier_id: ctx.supplierId,
      component_type_id: ctIds[typeCode],
      serial: `${typeCode.replace('-', '')}-${String(4000 + partCounter)}`,
      batch: `H${26 + (partCounter % 3)}-${String.fromCharCode(65 + (partCounter % 5))}`,
      status,
      born_at: born,
    })
    return id!
  }

  const sessionKinds = (series: string) =>
    series.startsWith('Meridian')
      ? [
          { kind: 'practice', hours: 1.5, day: 0 },
          { kind: 'practice', hours: 1.2, day: 0 },
          { kind: 'qualifying', hours: 0.4, day: 1 },
          { kind: 'race', hours: 4.4, day: 2 },
        ]
      : [
          { kind: 'practice', hours: 0.8, day: 0 },
          { kind: 'qualifying', hours: 0.3, day: 1 },
          { kind: 'race', hours: 0.9, day: 2 },
          { kind: 'race', hours: 0.9, day: 2 },
        ]

  const engineIds: Record<string, number> = {}
  for (const f of fleet) {
    const t = ENGINE_TYPES.find((x) => x.code === f.type)!
    const seriesEvents = events[t.series]!
    const firstRound = 8 - f.rounds
    // Ten days before its first round; an engine with no round yet was built a week ago, never later:
    // the next round's date would put its build in the future when the seed runs early in the UTC day.
    const builtAt = new Date(Math.min((seriesEvents[Math.max(0, firstRound)]?.startsAt ?? now) - 10 * DAY, now - 7 * DAY))
    const [engineId] = await trx('engines').insert({
      serial: f.serial,
      engine_type_id: typeIds[f.type],
      supplier_id: ctx.supplierId,
      team_id: f.team ? team[f.team] : null,
      status: 'active',
      location: f.location,
      chassis: f.chassis,
      built_at: builtAt,
    })
    engineIds[f.serial] = engineId!
    for (const p of positions[f.type]!) {
      const componentId = await newPart(p.type, builtAt, 'installed')
      await trx('installations').insert({ component_id: componentId, engine_id: engineId, position: p.position, from_at: builtAt })
    }
    for (let round = firstRound; round < 8; round++) {
      const ev = seriesEvents[round]!
      const kinds = sessionKinds(t.series)
      for (let k = 0; k < kinds.length; k++) {
        const s = kinds[k]!
        const seconds = Math.round(s.hours * 3600 * (0.9 + rand() * 0.2))
        const excursions: PlannedExcursion[] = []
        if (rand() < 0.25) excursions.push({ at: rand() * 0.95, peakRpm: t.overRevBands[0]!.minRpm + 60, holdS: 0.4 })
        if (f.overRevC && round === 7 && s.kind === 'race') {
          // A missed downshift in the last race: straight into the teardown band.
          excursions.push({ at: 0.62, peakRpm: t.overRevBands[2]!.minRpm + 180, holdS: 0.35 })
        }
        if (f.serial === 'KT4-2101' && round === 7 && s.kind === 'qualifying') {
          // A flick past the inspection threshold inside a longer logged excursion: one event, logged.
          excursions.push({ at: 0.5, peakRpm: t.overRevBands[0]!.minRpm + 40, holdS: 0.6, spike: { rpm: t.overRevBands[1]!.minRpm + 60, seconds: 0.05 } })
        }
        const trace = syntheticTrace(t, seconds, rand, { intensity: s.kind === 'qualifying' ? 1.4 : 1, excursions, channels: { topSpeedKmh: AVG_SPEED_KMH[t.code]! * 1.8 } })
        const startedAt = new Date(ev.startsAt + s.day * DAY + (k % 2) * 4 * 3600_000)
        await trx('sessions').insert(tracedSessionRow(trace, t, DEMO_EXPONENTS, {
          engine_id: engineId,
          team_id: f.team ? team[f.team] : null,
          event_id: ev.id,
          kind: s.kind,
          started_at: startedAt,
          distance_km: Math.round((trace.runningSeconds / 3600) * AVG_SPEED_KMH[t.code]! * (0.95 + rand() * 0.1) * 10) / 10,
        }))
        // maxima come from the trace's channels; four draws keep the rest of the demo as it was
        for (let k = 0; k < 4; k++) rand()
      }
    }
  }

  // Life follows the part: KV8-1201's crankshaft ran first in KV8-1001 (two rounds at the supplier's
  // test programme) and moved over at KV8-1201's build.
  const moved = await trx('installations as i')
    .join('engines as e', 'e.id', 'i.engine_id')
    .where({ 'e.serial': 'KV8-1001', 'i.position': 'crank' })
    .first('i.id', 'i.component_id')
  const target = await trx('installations as i').join('engines as e', 'e.id', 'i.engine_id').where({ 'e.serial': 'KV8-1201', 'i.position': 'crank' }).first('i.id', 'i.component_id', 'i.from_at')
  if (moved && target) {
    const swapAt = new Date(target.from_at)
    // KV8-1001 was built later than the swap would need; give its crank a history ending before KV8-1201's build.
    await trx('installations').where('id', moved.id).delete()
    await trx('installations').where('id', target.id).delete()
    const kv1001 = engineIds['KV8-1001']!
    await trx('engines').where('id', kv1001).update({ built_at: new Date(swapAt.getTime() - 60 * DAY) })
    await trx('installations').insert({ component_id: moved.component_id, engine_id: kv1001, position: 'crank', from_at: new Date(swapAt.getTime() - 60 * DAY), to_at: swapAt, removed_status: 'serviceable' })
    await trx('installations').insert({ component_id: moved.component_id, engine_id: engineIds['KV8-1201'], position: 'crank', from_at: swapAt })
    await trx('installations').insert({ component_id: target.component_id, engine_id: kv1001, position: 'crank', from_at: swapAt })
    // Its sessions in KV8-1001 before the move: two bench runs.
    const t = ENGINE_TYPES[0]!
    for (const [d, hours] of [[-40, 6], [-25, 7]] as const) {
      const trace = syntheticTrace(t, hours * 3600, rand, { intensity: 1.2, channels: { topSpeedKmh: null } })
      await trx('sessions').insert(tracedSessionRow(trace, t, DEMO_EXPONENTS, {
        engine_id: kv1001,
        team_id: null,
        event_id: null,
        kind: 'bench',
        started_at: new Date(swapAt.getTime() + d * DAY),
        distance_km: 0,
      }))
    }
  }

  // Spares on the shelf: fresh, and one quarantined rod.
  for (const code of ['KV8-ROD', 'KV8-ROD', 'KV8-CRK', 'KV8-VSP', 'KV8-PST', 'KT4-ROD', 'KT4-TRB', 'KT4-CRK']) await newPart(code, new Date(now - 30 * DAY), 'serviceable')
  await newPart('KV8-ROD', new Date(now - 90 * DAY), 'quarantined')

  // Assignments for the next rounds: every engine in a car runs the next two events.
  for (const f of fleet) {
    if (f.location !== 'car' || !f.team) continue
    const t = ENGINE_TYPES.find((x) => x.code === f.type)!
    for (const ev of events[t.series]!.slice(8, 10)) {
      await trx('event_plans').insert({ event_id: ev.id, engine_id: engineIds[f.serial], team_id: team[f.team], chassis: f.chassis })
    }
  }
}
