import { FLEET_READERS } from '#shared/roles'
import { addSession, emptyUsage, evaluatePartLife } from '#shared/domain/life'
import { lifeConfig, limitsOf, loadComponentTypes, loadEngineTypes, toEngineSession, toSessionDto } from '../../../services/fleet-data'
import { sessionById } from '../../../services/sessions'

// A session with what it cost each part that was fitted when it ran.
export default defineEventHandler(async (event) => {
  const actor = await requireActor(event, FLEET_READERS)
  const { id } = readValidParams(event, IdParams)
  const db = useDb()
  const row = await sessionById(db, id)
  if (!row || !canSee(actor, { supplierId: row.supplier_id, teamId: row.team_id })) notFound('Session')
  const engine = await db('engines').where('id', row.engine_id).first()
  const [type] = await loadEngineTypes(db, (qb) => qb.where('id', engine.engine_type_id))
  const componentTypes = new Map((await loadComponentTypes(db)).map((c) => [c.id, c]))
  const fitted = await db('installations as i')
    .join('components as c', 'c.id', 'i.component_id')
    .where('i.engine_id', row.engine_id)
    .where('i.from_at', '<=', row.started_at)
    .where((w) => w.whereNull('i.to_at').orWhere('i.to_at', '>', row.started_at))
    .select('c.id', 'c.serial', 'c.component_type_id', 'i.position')
  const session = toEngineSession(row)
  const cfg = lifeConfig(type!)
  const sessionCfg = session.bandWidthRpm === cfg.bandWidthRpm ? cfg : { ...cfg, bandWidthRpm: session.bandWidthRpm }
  const cost = fitted.map((p) => {
    const ct = componentTypes.get(p.component_type_id)!
    const limits = limitsOf(ct)
    const usage = addSession(emptyUsage(), session, sessionCfg, limits)
    const life = evaluatePartLife(usage, limits, cfg)
    return {
      componentId: p.id,
      serial: p.serial,
      position: type!.positions.find((x) => x.position === p.position)?.label ?? p.position,
      typeName: ct.name,
      category: ct.category,
      hours: usage.hours,
      km: usage.km,
      eqHours: usage.eqHours,
      overRevCounts: usage.overRevCounts,
      fraction: life.fraction,
      governing: life.governing,
    }
  })
  const details = json<Record<string, any> | null>(row.details, null)
  return {
    session: toSessionDto(row),
    details: details && { overview: details.overview ?? [], warnings: details.warnings ?? [], skippedRows: details.skippedRows ?? 0, rows: details.rows ?? null, gaps: details.gaps ?? [], gapCount: details.gapCount ?? 0, distanceSource: details.distanceSource ?? null },
    cost, engineType: { code: type!.code, revLimitRpm: type!.revLimitRpm, overRevBands: type!.overRevBands, bandWidthRpm: type!.bandWidthRpm } }
})
