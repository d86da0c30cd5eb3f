// Demo oil history: a few lab samples per engine that has run, from two invented labs.
// KV8-1202's latest sample shows an iron jump that trips the rate limit; the KV8-45 fleet
// carries enough samples for its statistical limits to be active. Each engine type has its
// oil limits with a new-oil reference, so the viscosity change and grade checks have something
// to read against. All figures are invented.
import type { Knex } from 'knex'
import { DEFAULT_OIL_LIMITS, type NewOilReference, type OilElement, type OilLimits, type OilSampleValues } from '#shared/domain/oil/limits'
import { oilSampleSchema } from '#shared/domain/oil/schema'
import { insertSamples } from '../oil-samples'
import { rng } from '../fixtures'

const DAY = 86_400_000
const LABS = { KV8: 'Quillmere Fluid Laboratory', KT4: 'Tallowfield Oil Lab' } as const

// Typical ppm of a healthy engine of each type (wear metals low, additive package high).
const BASE: Record<'KV8' | 'KT4', Partial<Record<OilElement, number>>> = {
  KV8: { Fe: 10, Cu: 4, Pb: 3, Al: 4, Cr: 1.5, Sn: 1, Ni: 0.5, Si: 7, Na: 3, K: 1, Mo: 60, B: 5, Zn: 1100, P: 950, Ca: 2300, Mg: 480 },
  KT4: { Fe: 8, Cu: 3, Pb: 2, Al: 6, Cr: 1, Sn: 1, Ni: 0.4, Si: 6, Na: 2, K: 1, Mo: 80, B: 4, Zn: 1000, P: 900, Ca: 2100, Mg: 520 },
}
// Wear metals that build up with oil hours, ppm per hour.
const WEAR_PER_HOUR: Partial<Record<OilElement, number>> = { Fe: 0.8, Cu: 0.1, Al: 0.15, Pb: 0.05 }

// The oil each type is filled with, as the supplier measured it new. Samples in service run a
// little thinner (shear): a few per cent below these, well inside the change limits.
const NEW_OIL: Record<'KV8' | 'KT4', { typeCode: string; reference: NewOilReference }> = {
  KV8: { typeCode: 'KV8-45', reference: { grade: '5W-40', kv40: 92.0, kv100: 14.6, tbn: 8.2 } },
  KT4: { typeCode: 'KT4-20', reference: { grade: '0W-30', kv40: 63.0, kv100: 11.0, tbn: 9.6 } },
}
// HTHS (mPa s at 150 C) as a fixed share of KV100, so adding it draws nothing from the generator
// and the rest of the demo history stays as it was. Above the J300 minimums (3.5 and 2.9).
const HTHS_PER_KV100: Record<'KV8' | 'KT4', number> = { KV8: 0.275, KT4: 0.295 }

const SAMPLE_COUNT: Record<string, number> = {
  'KV8-1101': 9, 'KV8-1102': 6, 'KV8-1103': 3, 'KV8-1201': 8, 'KV8-1202': 7, 'KV8-1001': 4,
  'KT4-2101': 8, 'KT4-2102': 6, 'KT4-2103': 4, 'KT4-2104': 3, 'KT4-2201': 6,
}

export async function seedOil(trx: Knex.Transaction, ctx: { now: Date }) {
  for (const { typeCode, reference } of Object.values(NEW_OIL)) {
    const type = await trx('engine_types').where('code', typeCode).first('id')
    if (!type) continue
    const limits: OilLimits = { ...DEFAULT_OIL_LIMITS, newOil: reference }
    await trx('oil_limits').insert({ engine_type_id: type.id, limits: JSON.stringify(limits) })
  }
  const now = ctx.now.getTime()
  const engines = await trx('engines').whereIn('serial', Object.keys(SAMPLE_COUNT)).orderBy('serial').select('id', 'serial', 'built_at')
  const rows: { engineId: number; values: OilSampleValues; lab: string; source: 'seed' }[] = []
  let counter = 0
  for (const e of engines) {
    const family = (e.serial as string).startsWith('KV8') ? 'KV8' : 'KT4'
    const rand = rng(7000 + e.id)
    const noise = (x: number, spread: number) => Math.max(0, x * (1 + (rand() - 0.5) * spread))
    const builtAt = new Date(e.built_at).getTime()
    const first = Math.max(builtAt + 2 * DAY, now - 150 * DAY)
    const last = now - 2 * DAY
    if (last <= first) continue
    const n = SAMPLE_COUNT[e.serial]!
    const step = (last - first) / Math.max(1, n - 1)
    let engineHours = 0
    let oilHours = 0
    for (let i = 0; i < n; i++) {
      const gap = 3 + rand() * 2
      engineHours += gap
      // A fresh fill every third sample, except KV8-1202's last two, which share a fill for the rate.
      const fresh = i > 0 && i % 3 === 0 && !(e.serial === 'KV8-1202' && i === n - 1)
      oilHours = i === 0 || fresh ? gap : oilHours + gap
      const elements: Partial<Record<OilElement, number>> = {}
      for (const [el, base] of Object.entries(BASE[family]) as [OilElement, number][]) {
        const wear = (WEAR_PER_HOUR[el] ?? 0) * oilHours
        const spread = base > 100 ? 0.1 : 0.3
        elements[el] = Number(noise(base + wear, spread).toFixed(base > 100 ? 0 : 1))
      }
      if (e.serial === 'KV8-1202' && i === n - 1) {
        // Iron climbs about 35 ppm per 10 oil hours since the previous sample: a bearing or liner starting to go.
        const prevFe = rows[rows.length - 1]!.values.elements.Fe!
        elements.Fe = Number((prevFe + 3.5 * gap).toFixed(1))
        elements.Cu = Number((elements.Cu! + 2).toFixed(1))
      }
      counter += 1
      const kv100 = family === 'KV8' ? noise(14.2, 0.04) : noise(10.6, 0.05)
      const kv40 = family === 'KV8' ? kv100 * 6.3 : kv100 * 5.7
      const p4 = noise(3200, 0.5)
      const input = {
        sampleId: `${family === 'KV8' ? 'QFL' : 'TOL'}-26-${String(1000 + counter)}`,
        sampledAt: new Date(first + i * step).toISOString(),
        engineHours: Number(engineHours.toFixed(1)),
        oilHours: Number(oilHours.toFixed(1)),
        elements,
        kv40: Number(kv40.toFixed(2)),
        kv100: Number(kv100.toFixed(2)),
        hths: Number((kv100 * HTHS_PER_KV100[family]).toFixed(2)),
        fuelDilutionPct: Number(noise(1.4, 0.6).toFixed(1)),
        waterPct: Number(noise(0.02, 0.6).toFixed(3)),
        p4: Math.round(p4),
        p6: Math.round(p4 * 0.28),
        p14: Math.round(p4 * 0.025),
        grade: family === 'KV8' ? '5W-40' : '0W-30',
        oilChanged: fresh,
      }
      // The demo goes through the same checks as a lab import.
      const values = oilSampleSchema({ now: ctx.now, builtAt: new Date(builtAt) }).parse(input)
      rows.push({ engineId: e.id, values, lab: LABS[family], source: 'seed' })
    }
  }
  await insertSamples(trx, rows, null)
}
