// Wear trends: each measured characteristic against the running hours of the part.
import type { Knex } from 'knex'
import { TEARDOWN_NOTICE, hoursToLimit, wearTrend, type Characteristic } from '#shared/domain/teardown'
import type { Actor } from '../../utils/guard'
import { canSeePart } from '../../utils/guard'
import { notFound } from '../../utils/errors'
import { iso, num } from '../../utils/db'
import { loadComponentTypes } from '../fleet-data'
import type { Db } from './common'

/** Running hours of each part at given moments, from installations and the sessions of the engines it sat in. */
export async function partHoursAt(db: Db, componentIds: number[]) {
  const inst = componentIds.length ? await db('installations').whereIn('component_id', componentIds).select('component_id', 'engine_id', 'from_at', 'to_at') : []
  const engineIds = [...new Set(inst.map((i) => i.engine_id))]
  const sessions = engineIds.length ? await db('sessions').whereIn('engine_id', engineIds).whereNull('voided_at').select('engine_id', 'started_at', 'running_seconds') : []
  return (componentId: number, at: Date) => {
    const t = at.getTime()
    let seconds = 0
    for (const i of inst) {
      if (i.component_id !== componentId) continue
      const from = new Date(i.from_at).getTime()
      const to = i.to_at ? new Date(i.to_at).getTime() : Infinity
      for (const s of sessions) {
        const st = new Date(s.started_at).getTime()
        // Same window rule as the life engine: from <= session < to, and before the moment asked.
        if (s.engine_id === i.engine_id && st >= from && st < to && st < t) seconds += num(s.running_seconds)
      }
    }
    return seconds / 3600
  }
}

export async function partWear(db: Knex, actor: Actor, componentId: number) {
  const comp = await db('components').where('id', componentId).first()
  if (!comp) notFound('Part')
  const current = await db('installations as i').join('engines as e', 'e.id', 'i.engine_id').where('i.component_id', componentId).whereNull('i.to_at').first('e.team_id')
  // Same visibility as the part page: the supplier sees its parts; a team while the part sits in its engine.
  if (!canSeePart(actor, { supplierId: comp.supplier_id, currentTeamId: current?.team_id ?? null })) notFound('Part')
  const [ct] = await loadComponentTypes(db, (qb) => qb.where('id', comp.component_type_id))
  const rows = await db('teardown_measurements as m').join('teardowns as t', 't.id', 'm.teardown_id').join('engines as e', 'e.id', 't.engine_id').where('m.component_id', componentId).orderBy('m.at').select('m.*', 't.opened_at', 'e.serial as engine_serial')
  const hoursAt = await partHoursAt(db, [componentId])
  const now = new Date()
  const currentHours = hoursAt(componentId, now)
  const characteristics = (ct!.characteristics as Characteristic[]).map((c) => {
    const points = rows
      .filter((r) => r.characteristic_key === c.key)
      .map((r) => ({ teardownId: r.teardown_id, engineSerial: r.engine_serial, at: iso(r.at)!, hours: hoursAt(componentId, new Date(r.at)), value: num(r.value), verdict: r.verdict }))
    const trend = wearTrend(points)
    const hoursLeft = trend ? hoursToLimit(trend, currentHours, c) : null
    return {
      key: c.key,
      label: c.label,
      unit: c.unit,
      nominal: c.nominal,
      min: c.min,
      max: c.max,
      points,
      slopePerHour: trend?.slopePerHour ?? null,
      intercept: trend?.intercept ?? null,
      n: trend?.n ?? points.length,
      towards: trend ? (trend.slopePerHour > 0 ? 'max' : trend.slopePerHour < 0 ? 'min' : null) : null,
      hoursLeft,
    }
  })
  return { componentId, serial: comp.serial, typeName: ct!.name, currentHours, characteristics, notice: TEARDOWN_NOTICE }
}
