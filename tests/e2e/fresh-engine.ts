// An engine of its own for a test file: a new serial of a demo engine type, leased to a demo team,
// with a new part in every position. No other test file sees it, so its figures move only by the
// test that made it.
import { db } from './helpers'

const DAY = 86_400_000

export interface FreshEngine {
  id: number
  serial: string
  engineTypeId: number
  teamId: number
  partIds: number[]
  /** a crank drive part fitted since the build */
  crankshaftId: number
}

export async function freshEngine(prefix: string, opts: { typeCode?: string; team?: string; builtDaysAgo?: number } = {}): Promise<FreshEngine> {
  const k = db()
  const type = await k('engine_types').where('code', opts.typeCode ?? 'KV8-45').first()
  const team = await k('organisations').where('name', opts.team ?? 'Marlowe Vane Racing').first()
  const serial = `${prefix}-${Date.now().toString(36).toUpperCase()}`
  const builtAt = new Date(Date.now() - (opts.builtDaysAgo ?? 400) * DAY)
  const partIds: number[] = []
  let crankshaftId = 0
  let engineId = 0
  await k.transaction(async (trx) => {
    const [id] = await trx('engines').insert({ serial, engine_type_id: type.id, supplier_id: type.supplier_id, team_id: team.id, status: 'active', location: 'car', chassis: null, built_at: builtAt })
    const positions = await trx('engine_type_positions').where('engine_type_id', type.id).orderBy('sort')
    for (const [i, p] of positions.entries()) {
      const [componentId] = await trx('components').insert({ supplier_id: type.supplier_id, component_type_id: p.component_type_id, serial: `${serial}-P${i + 1}`, status: 'installed', born_at: builtAt })
      await trx('installations').insert({ component_id: componentId, engine_id: id, position: p.position, from_at: builtAt })
      partIds.push(componentId!)
      if (/crank/i.test(p.position) && !crankshaftId) crankshaftId = componentId!
    }
    // New rows move the fleet's life: every cached computation must see them.
    await trx('life_revision').where('id', 1).increment('revision', 1)
    engineId = id!
  })
  return { id: engineId, serial, engineTypeId: type.id, teamId: team.id, partIds, crankshaftId: crankshaftId || partIds[0]! }
}

/**
 * Removes what `freshEngine` made and the sessions logged on it (audit rows stay: the log is
 * append-only), so later files see the demo fleet as seeded (other files count its engines).
 */
export async function removeFreshEngines(engines: (FreshEngine | undefined)[], eventIds: number[] = []) {
  const ids = engines.filter((e): e is FreshEngine => Boolean(e)).map((e) => e.id)
  if (!ids.length && !eventIds.length) return
  await db().transaction(async (trx) => {
    const alertIds = await trx('alerts').whereIn('engine_id', ids).pluck('id')
    if (alertIds.length) await trx('mail_outbox').whereIn('alert_id', alertIds).delete()
    await trx('alerts').whereIn('engine_id', ids).delete()
    await trx('sessions').whereIn('engine_id', ids).delete()
    await trx('event_plans').whereIn('engine_id', ids).delete()
    const componentIds = await trx('installations').whereIn('engine_id', ids).pluck('component_id')
    await trx('installations').whereIn('engine_id', ids).delete()
    await trx('components').whereIn('id', componentIds).delete()
    await trx('engines').whereIn('id', ids).delete()
    if (eventIds.length) await trx('events').whereIn('id', eventIds).delete()
    await trx('life_revision').where('id', 1).increment('revision', 1)
  })
}
