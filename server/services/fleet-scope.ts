import type { Knex } from 'knex'
import type { EngineDetailDto } from '#shared/types/fleet'
import type { Actor } from '../utils/guard'
import { canSee } from '../utils/guard'
import { notFound } from '../utils/errors'
import { fleetLife, type FleetLife } from './life'

/** The engines the actor may see, from the shared fleet life. */
export async function visibleFleet(db: Knex, actor: Actor, now = new Date()): Promise<{ life: FleetLife; engines: EngineDetailDto[] }> {
  const life = await fleetLife(db, now)
  return { life, engines: life.engines.filter((e) => canSee(actor, { supplierId: e.supplierId, teamId: e.teamId })) }
}

export async function visibleEngine(db: Knex, actor: Actor, id: number): Promise<EngineDetailDto> {
  const { engines } = await visibleFleet(db, actor)
  const engine = engines.find((e) => e.id === id)
  if (!engine) notFound('Engine')
  return engine
}
